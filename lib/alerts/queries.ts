import { QueryTypes } from 'sequelize';
import {
  ALERT_STATES,
  Alert,
  AlertEvent,
  AlertRule,
  AnalysisSnapshot,
  Note,
  NoteRevision,
  RuleEvaluation,
  Series,
  Site,
  SiteRuleEvaluation,
  SiteSnapshot,
  User,
  db,
  readTransaction,
  type AlertKind,
  type AlertState,
} from '@/models';
import { NotFoundError } from '@/lib/http/errors';
import type { Actor } from '@/lib/auth/roles';
import { cachedRead } from '@/lib/db/read-cache';
import { isoFromSqlDate, sqlDate } from '@/lib/db/sql-date';
import { presentRules } from './rules';
import { allowedActions } from './triage';
import type { AlertQueue, AlertQueueQuery } from '@/lib/schemas/alert';

/** Which states each queue shows; "mine" is open alerts assigned to the asking user. */
const QUEUE_STATES: Record<AlertQueue, AlertState[]> = {
  triage: ['new', 'acknowledged'],
  escalated: ['escalated'],
  mine: ['new', 'acknowledged', 'escalated'],
  closed: ['confirmed', 'dismissed'],
  all: ['new', 'acknowledged', 'escalated', 'confirmed', 'dismissed'],
};

const ORDER: Record<AlertQueueQuery['sort'], string> = {
  newest: 'a.created_at DESC, a.id DESC',
  oldest: 'a.created_at ASC, a.id ASC',
  severity: "CASE a.severity WHEN 'warning' THEN 0 ELSE 1 END, a.created_at DESC, a.id DESC",
  tau: 'a.peak_tau IS NULL, a.peak_tau DESC, a.id DESC',
  updated: 'a.updated_at DESC, a.id DESC',
};

/** What an alert is on, for screens: a series, or the site of a site alert (rules on site-level indicators). */
export interface AlertSubject {
  kind: 'series' | 'site';
  slug: string;
  name: string;
  href: string;
  timeZone: string;
}

function subjectOf(
  series: { slug: string; name: string; timeZone: string } | null,
  site: { slug: string; name: string; timeZone: string } | null,
): AlertSubject {
  if (series) return { kind: 'series', slug: series.slug, name: series.name, href: `/series/${series.slug}`, timeZone: series.timeZone };
  return { kind: 'site', slug: site!.slug, name: `site ${site!.name}`, href: `/sites/${site!.slug}`, timeZone: site!.timeZone };
}

export interface AlertListItem {
  id: number;
  state: AlertState;
  severity: string;
  version: number;
  /** 'slowing-down' (from a rule) or 'abrupt-shift' (from the change-point detection; no rule) */
  kind: AlertKind;
  /** the series the alert is on; null for a site alert */
  series: { id: number; slug: string; name: string; timeZone: string } | null;
  /** what the alert is on, as a screen names and links it: its series, or a site alert's site */
  on: AlertSubject;
  /** the rule and the direction it looks in; null for an abrupt-shift alert */
  rule: { id: number; indicator: string; direction: string } | null;
  /** the abrupt shift (epoch ms, level change); null for a slowing-down alert */
  shift: { time: number; size: number | null } | null;
  /** a data-late alert's silence: last observation before it, first after it (null while silent) */
  silence: { lastDataAt: number; backAt: number | null } | null;
  assignee: { id: number; name: string } | null;
  /** strongest tau while open, seen in the rule's direction */
  peakTau: number | null;
  /** the latest evaluation: tau as computed, with the direction it was judged in; the Kendall p is descriptive only */
  latest: { tau: number | null; direction: string | null; surrogateP: number | null; kendallP: number | null };
  evaluationCount: number;
  dismissReason: string | null;
  createdAt: string;
  updatedAt: string;
  closedAt: string | null;
}

/** One page of a queue as the alerts page and `GET /api/alerts` carry it, with every queue's size under the same filters. */
export interface AlertQueuePage {
  items: AlertListItem[];
  total: number;
  counts: Record<Exclude<AlertQueue, 'all'>, number>;
  page: number;
  pageSize: number;
}

function where(query: Omit<AlertQueueQuery, 'page' | 'pageSize' | 'sort'>, actor: Pick<Actor, 'id'>, queue: AlertQueue, now: number) {
  const states = query.state ? QUEUE_STATES[queue].filter((s) => s === query.state) : QUEUE_STATES[queue];
  // Every state = no condition, which leaves the planner free to walk the created_at index in order.
  const clauses = [states.length === ALERT_STATES.length ? 'TRUE' : states.length ? `a.state IN (${states.map((s) => `'${s}'`).join(', ')})` : 'FALSE'];
  const replacements: Record<string, unknown> = {};
  if (queue === 'mine') {
    clauses.push('a.assignee_id = :me');
    replacements.me = actor.id;
  }
  if (query.series) {
    clauses.push('a.series_id = (SELECT id FROM series WHERE slug = :slug)');
    replacements.slug = query.series;
  }
  if (query.site) {
    // Its own alerts (site rules) and those of its series, retired ones included: their alerts stay on record.
    clauses.push(
      '(a.site_id = (SELECT id FROM sites WHERE slug = :site) OR a.series_id IN (SELECT id FROM series WHERE site_id = (SELECT id FROM sites WHERE slug = :site)))',
    );
    replacements.site = query.site;
  }
  if (query.kind) {
    clauses.push('a.kind = :kind');
    replacements.kind = query.kind;
  }
  if (query.severity) {
    clauses.push('a.severity = :severity');
    replacements.severity = query.severity;
  }
  if (query.age) {
    const match = /^([<>]?)(\d+)([hd])$/.exec(query.age)!;
    const ms = Number(match[2]) * (match[3] === 'd' ? 86_400_000 : 3_600_000);
    clauses.push(match[1] === '>' ? 'a.created_at < :ageBound' : 'a.created_at >= :ageBound');
    replacements.ageBound = sqlDate(now - ms);
  }
  return { sql: clauses.join(' AND '), replacements };
}

/**
 * One page of a queue with its filters, plus the size of every queue under the same filters (for the tabs).
 * The page's ids come from the alerts table alone (state/series + created_at indexes, see migrations), and only
 * those rows are joined to their series, rule, assignee and the evaluation of their latest snapshot; counts are
 * one COUNT per queue.
 */
export async function fetchAlertQueue(query: AlertQueueQuery, actor: Pick<Actor, 'id'>, now = Date.now()): Promise<AlertQueuePage> {
  // An age filter reads the clock, so its answer is not kept; every other queue is a pure read (the "mine" count needs the actor).
  if (query.age) return loadAlertQueue(query, actor, now);
  return cachedRead(`alert-queue:${actor.id}:${JSON.stringify(query)}`, () => loadAlertQueue(query, actor, now));
}

async function loadAlertQueue(query: AlertQueueQuery, actor: Pick<Actor, 'id'>, now: number): Promise<AlertQueuePage> {
  const sequelize = await db();
  const filter = where(query, actor, query.queue, now);
  // One read transaction, so the page and the counts see the same moment even while a scheduler in another
  // process opens an alert between the statements (else a count of 1 could stand beside an empty page).
  const { rows, counts, total } = await readTransaction(async (transaction) => {
    const rows = await sequelize.query<Record<string, unknown>>(
      `SELECT a.id, a.kind, a.state, a.severity, a.version, a.peak_tau, a.evaluation_count, a.dismiss_reason, a.created_at, a.updated_at, a.closed_at,
              a.shift_time, a.shift_size, a.data_last_at, a.data_back_at, s.id AS series_id, s.slug, s.name AS series_name, s.time_zone, r.id AS rule_id, r.indicator, r.direction AS rule_direction,
              u.id AS assignee_id, u.name AS assignee_name,
              si.slug AS site_slug, si.name AS site_name, si.time_zone AS site_time_zone,
              COALESCE(e.tau, se.tau) AS tau, COALESCE(e.direction, se.direction) AS judged_direction, COALESCE(e.surrogate_p, se.surrogate_p) AS surrogate_p, e.kendall_p
       FROM (SELECT a.id FROM alerts a WHERE ${filter.sql} ORDER BY ${ORDER[query.sort]} LIMIT :limit OFFSET :offset) page
       JOIN alerts a ON a.id = page.id
       LEFT JOIN series s ON s.id = a.series_id
       LEFT JOIN sites si ON si.id = a.site_id
       LEFT JOIN alert_rules r ON r.id = a.rule_id
       LEFT JOIN users u ON u.id = a.assignee_id
       LEFT JOIN rule_evaluations e ON e.rule_id = a.rule_id AND e.snapshot_id = a.latest_snapshot_id
       LEFT JOIN site_rule_evaluations se ON se.rule_id = a.rule_id AND se.site_snapshot_id = a.latest_snapshot_id
       ORDER BY ${ORDER[query.sort]}`,
      { replacements: { ...filter.replacements, limit: query.pageSize, offset: (query.page - 1) * query.pageSize }, type: QueryTypes.SELECT, transaction },
    );
    const counts = {} as Record<Exclude<AlertQueue, 'all'>, number>;
    for (const queue of ['triage', 'escalated', 'mine', 'closed'] as const) {
      const f = where({ ...query, state: undefined }, actor, queue, now);
      const [row] = await sequelize.query<{ count: number }>(`SELECT COUNT(*) AS count FROM alerts a WHERE ${f.sql}`, {
        replacements: f.replacements,
        type: QueryTypes.SELECT,
        transaction,
      });
      counts[queue] = Number(row.count);
    }
    let total: number;
    if (query.queue !== 'all' && !query.state) total = counts[query.queue];
    else {
      const [row] = await sequelize.query<{ count: number }>(`SELECT COUNT(*) AS count FROM alerts a WHERE ${filter.sql}`, {
        replacements: filter.replacements,
        type: QueryTypes.SELECT,
        transaction,
      });
      total = Number(row.count);
    }
    return { rows, counts, total };
  });
  const items: AlertListItem[] = rows.map((r) => {
    const series = r.series_id === null ? null : { id: Number(r.series_id), slug: String(r.slug), name: String(r.series_name), timeZone: String(r.time_zone) };
    const site = r.site_slug === null ? null : { slug: String(r.site_slug), name: String(r.site_name), timeZone: String(r.site_time_zone) };
    return {
      id: Number(r.id),
      state: r.state as AlertState,
      severity: String(r.severity),
      version: Number(r.version),
      series,
      on: subjectOf(series, site),
      kind: (r.kind ?? 'slowing-down') as AlertKind,
      rule: r.rule_id === null ? null : { id: Number(r.rule_id), indicator: String(r.indicator), direction: String(r.rule_direction) },
      shift: r.shift_time === null ? null : { time: Number(r.shift_time), size: r.shift_size as number | null },
      silence: r.data_last_at === null ? null : { lastDataAt: Number(r.data_last_at), backAt: r.data_back_at === null ? null : Number(r.data_back_at) },
      assignee: r.assignee_id === null ? null : { id: Number(r.assignee_id), name: String(r.assignee_name) },
      peakTau: r.peak_tau as number | null,
      latest: {
        tau: r.tau as number | null,
        direction: (r.judged_direction ?? r.rule_direction ?? null) as string | null,
        surrogateP: r.surrogate_p as number | null,
        kendallP: r.kendall_p as number | null,
      },
      evaluationCount: Number(r.evaluation_count),
      dismissReason: r.dismiss_reason as string | null,
      createdAt: isoFromSqlDate(r.created_at),
      updatedAt: isoFromSqlDate(r.updated_at),
      closedAt: r.closed_at === null ? null : isoFromSqlDate(r.closed_at),
    };
  });
  return { items, total, counts, page: query.page, pageSize: query.pageSize } satisfies AlertQueuePage;
}

/** How a detail carries its evidence snapshots' charts: full curves (the API) or the saved chart views (the page). */
export type EvidenceCharts = 'curves' | 'views';

/**
 * The judgements an alert rests on, oldest first: of its series rule (snapshot ids of analysis snapshots) or of its
 * site rule (site snapshot ids; no Kendall p or q-value there).
 */
async function alertEvaluations(alertId: number, onSite: boolean) {
  const rows = onSite
    ? (await SiteRuleEvaluation.findAll({ where: { alertId }, order: [['siteSnapshotId', 'ASC']], limit: 500 })).map((e) => ({
        e,
        snapshotId: e.siteSnapshotId,
        kendallP: null,
        qValue: null,
      }))
    : (await RuleEvaluation.findAll({ where: { alertId }, order: [['snapshotId', 'ASC']], limit: 500 })).map((e) => ({
        e,
        snapshotId: e.snapshotId,
        kendallP: e.kendallP,
        qValue: e.qValue,
      }));
  return rows.map(({ e, snapshotId, kendallP, qValue }) => ({
    snapshotId,
    direction: e.direction ?? 'rising',
    tau: e.tau,
    kendallP,
    surrogateP: e.surrogateP,
    qValue,
    level: e.level,
    streak: e.streak,
    outcome: e.outcome,
    at: e.createdAt.toISOString(),
  }));
}

function presentSnapshot(snapshot: AnalysisSnapshot | SiteSnapshot | null, charts: EvidenceCharts) {
  if (!snapshot) return null;
  const common = {
    id: snapshot.id,
    createdAt: snapshot.createdAt.toISOString(),
    status: snapshot.status,
    settings: snapshot.settings,
    summary: snapshot.summary,
    n: snapshot.n,
    dataFrom: snapshot.dataFrom === null ? null : Number(snapshot.dataFrom),
    dataTo: snapshot.dataTo === null ? null : Number(snapshot.dataTo),
  };
  // A site snapshot names its member series and has curves but no saved chart view.
  if (snapshot instanceof SiteSnapshot) return { ...common, members: snapshot.members, ...(charts === 'curves' ? { curves: snapshot.curves } : {}) };
  return { ...common, ...(charts === 'curves' ? { curves: snapshot.curves } : { chartView: snapshot.chartView }) };
}

/**
 * Everything the alert page shows: the alert, its series and rule, the evidence (first and latest snapshot with
 * their curves), the evaluation trail, the timeline with who and when, notes with their edit history, and the
 * actions the asking user may take.
 */
/** Throws NotFoundError unless alert `id` exists: one primary-key lookup, for pages that must answer 404 before streaming. */
export async function assertAlertExists(id: number): Promise<void> {
  await db();
  if (!(await Alert.findByPk(id, { attributes: ['id'] }))) throw new NotFoundError('Alert');
}

export async function fetchAlertDetail(id: number, actor?: Pick<Actor, 'role'>, charts: EvidenceCharts = 'curves') {
  await db();
  const alert = await Alert.findByPk(id, {
    include: [
      { model: Series, as: 'series' },
      { model: Site, as: 'site' },
      { model: AlertRule, as: 'rule' },
      { model: User, as: 'assignee', attributes: ['id', 'name', 'email'] },
    ],
  });
  if (!alert) throw new NotFoundError('Alert');
  const joined = alert as Alert & { series: Series | null; site: Site | null; rule: AlertRule | null; assignee: User | null };
  const onSite = joined.series === null;
  // Only the large column the answer carries is read: the curves or the chart view (site snapshots have curves only).
  const snapshotAttributes = { exclude: [charts === 'curves' ? 'chartView' : 'curves'] };
  const findSnapshot = (snapshotId: number) =>
    onSite
      ? SiteSnapshot.findByPk(snapshotId, charts === 'curves' ? {} : { attributes: { exclude: ['curves'] } })
      : AnalysisSnapshot.findByPk(snapshotId, { attributes: snapshotAttributes });
  const [first, latest, events, notes, evaluations, rules] = await Promise.all([
    findSnapshot(alert.firstSnapshotId),
    alert.latestSnapshotId === alert.firstSnapshotId ? null : findSnapshot(alert.latestSnapshotId),
    AlertEvent.findAll({ where: { alertId: id }, include: [{ model: User, as: 'actor', attributes: ['id', 'name'] }], order: [['id', 'ASC']] }),
    Note.findAll({
      where: { alertId: id },
      include: [
        { model: User, as: 'author', attributes: ['id', 'name'] },
        { model: NoteRevision, as: 'revisions' },
      ],
      order: [['id', 'ASC']],
    }),
    alertEvaluations(id, onSite),
    joined.rule ? presentRules([joined.rule]) : Promise.resolve([]),
  ]);
  return {
    id: alert.id,
    kind: alert.kind,
    state: alert.state,
    severity: alert.severity,
    version: alert.version,
    /** strongest tau while open, seen in the rule's direction */
    peakTau: alert.peakTau,
    shift: alert.kind === 'abrupt-shift' && alert.shiftTime !== null ? { time: Number(alert.shiftTime), size: alert.shiftSize } : null,
    silence: alert.kind === 'data-late' && alert.dataLastAt !== null ? { lastDataAt: alert.dataLastAt, backAt: alert.dataBackAt } : null,
    evaluationCount: alert.evaluationCount,
    dismissReason: alert.dismissReason,
    createdAt: alert.createdAt.toISOString(),
    updatedAt: alert.updatedAt.toISOString(),
    closedAt: alert.closedAt?.toISOString() ?? null,
    /** the series the alert is on; null for a site alert (then `site`) */
    series: joined.series
      ? {
          id: joined.series.id,
          slug: joined.series.slug,
          name: joined.series.name,
          site: joined.series.site,
          unit: joined.series.unit,
          timeZone: joined.series.timeZone,
        }
      : null,
    site: joined.site ? { id: joined.site.id, slug: joined.site.slug, name: joined.site.name } : null,
    on: subjectOf(joined.series, joined.site),
    rule: rules[0] ?? null,
    assignee: joined.assignee ? { id: joined.assignee.id, name: joined.assignee.name, email: joined.assignee.email } : null,
    evidence: {
      first: presentSnapshot(first, charts),
      latest: presentSnapshot(latest ?? first, charts),
      evaluations,
    },
    timeline: events.map((e) => {
      const by = (e as AlertEvent & { actor?: User | null }).actor;
      return {
        id: e.id,
        action: e.action,
        fromState: e.fromState,
        toState: e.toState,
        reason: e.reason,
        detail: e.detail,
        actor: by ? { id: by.id, name: by.name } : null,
        at: e.createdAt.toISOString(),
      };
    }),
    notes: notes.map((n) => {
      const j = n as Note & { author?: User; revisions?: NoteRevision[] };
      return {
        id: n.id,
        body: n.body,
        author: j.author ? { id: j.author.id, name: j.author.name } : null,
        createdAt: n.createdAt.toISOString(),
        updatedAt: n.updatedAt.toISOString(),
        edited: (j.revisions?.length ?? 0) > 0,
        revisions: (j.revisions ?? []).sort((a, b) => a.id - b.id).map((r) => ({ body: r.body, editedBy: r.editedBy, replacedAt: r.createdAt.toISOString() })),
      };
    }),
    allowedActions: actor ? allowedActions(alert.state, actor.role) : [],
  };
}
/** The alert as its page and `GET /api/alerts/:id` carry it: plain data, every time an ISO 8601 string. */
export type AlertDetail = Awaited<ReturnType<typeof fetchAlertDetail>>;
