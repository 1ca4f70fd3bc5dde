import { QueryTypes } from 'sequelize';
import { db } from '@/models';
import { ANALYSIS_CAUTION } from '@/lib/engine/analyze';
import { latestRuleCalibration } from '@/lib/backtest/jobs';
import { lateAfterMs } from '@/lib/alerts/lateness';
import { fetchSeriesOverview } from '@/lib/overview';
import { indicatorLabel } from '@/lib/display/analysis-labels';
import { sqlDate } from '@/lib/db/sql-date';
import { jsonElements, jsonPath, jsonText } from '@/lib/db/dialect';
import {
  completeness,
  durationSummary,
  periodBounds,
  periodLabel,
  type LateStretch,
  type Period,
  type PeriodReport,
  type ReportAlert,
  type ReportChange,
  type ReportSeries,
} from './period-shape';

const HOUR = 3_600_000;

/**
 * Which series a report of `site` covers. Today a site is the text of `series.site`; it is compared by its slug
 * form ("North Basin" = "north-basin"), so the site's name or slug both work — and a site model can replace this
 * one function.
 */
export function siteKey(site: string): string {
  return site
    .trim()
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-|-$/g, '');
}

interface SeriesRow {
  id: number;
  slug: string;
  name: string;
  site: string;
  interval_ms: number | null;
  late_after_ms: number | null;
  first_t: number | null;
}

interface AlertRow {
  id: number;
  kind: string;
  /** null for a site alert (then site_slug and site_name) */
  series_id: number | null;
  site_slug: string | null;
  site_name: string | null;
  severity: string;
  state: string;
  created_at: string;
  shift_time: number | null;
  shift_size: number | null;
  data_last_at: number | null;
  indicator: string | null;
  decision_action: string | null;
  decided_at: string | null;
  decided_by: string | null;
  decision_reason: string | null;
  decision_note: string | null;
  returned_at: string | null;
}

const iso = (ms: number) => new Date(ms).toISOString();
const isoOf = (stored: string) => new Date(stored).toISOString();
const hours = (ms: number) => Math.round((ms / HOUR) * 100) / 100;

/** What a rule-less alert reports, for the alert table's subject column. */
function alertSubject(row: AlertRow): string {
  if (row.kind === 'abrupt-shift') return `abrupt shift${row.shift_time !== null ? ` at ${iso(Number(row.shift_time))}` : ''}`;
  if (row.kind === 'data-late') return `data late since ${row.data_last_at !== null ? iso(Number(row.data_last_at)) : '?'}`;
  if (!row.indicator) return 'rule deleted';
  return row.kind === 'site-slowing-down' ? `${indicatorLabel(row.indicator)} across the site's series` : indicatorLabel(row.indicator);
}

const allowanceOf = (s: SeriesRow) =>
  lateAfterMs(s.interval_ms === null ? null : Number(s.interval_ms), s.late_after_ms === null ? null : Number(s.late_after_ms));

interface RecordFacts {
  /** observations in [start, until) */
  received: number;
  /** silences longer than the series' allowance touching [start, until); backAt null = still silent at `until` */
  stretches: { lastDataAt: number; backAt: number | null }[];
}

/**
 * Each series' observations received in [start, until) and its silences longer than its lateness allowance: every
 * gap between consecutive observations ending inside the period (the observation before `start` included, so a
 * silence that began earlier counts), and a trailing silence still running at `until`. Two queries for all series:
 * indexed counts and last instants per series, then one window pass (LAG per series) over the observations from
 * each series' last one before the period, returning only the gaps.
 */
async function recordFacts(series: SeriesRow[], start: number, until: number): Promise<Map<number, RecordFacts>> {
  const sequelize = await db();
  const edges = await sequelize.query<{ id: number; n: number; before_t: number | null; tail_t: number | null }>(
    `SELECT s.value AS id,
       (SELECT COUNT(*) FROM observations o WHERE o.series_id = s.value AND o.t >= :start AND o.t < :until) AS n,
       (SELECT MAX(t) FROM observations o WHERE o.series_id = s.value AND o.t < :start) AS before_t,
       (SELECT MAX(t) FROM observations o WHERE o.series_id = s.value AND o.t < :until) AS tail_t
     FROM ${jsonElements(sequelize, ':ids', 's', 'bigint')}`,
    { replacements: { ids: JSON.stringify(series.map((s) => s.id)), start, until }, type: QueryTypes.SELECT },
  );
  const byId = new Map(series.map((s) => [s.id, s]));
  const scope = edges.map((e) => [Number(e.id), allowanceOf(byId.get(Number(e.id))!), e.before_t === null ? start : Number(e.before_t)]);
  const gaps = await sequelize.query<{ series_id: number; prev: number; t: number }>(
    `WITH scope AS (SELECT ${jsonPath(sequelize, 'e.value', '$[0]', 'bigint')} AS id, ${jsonPath(sequelize, 'e.value', '$[1]', 'double precision')} AS allowed,
       ${jsonPath(sequelize, 'e.value', '$[2]', 'bigint')} AS from_t FROM ${jsonElements(sequelize, ':scope', 'e', 'json')}),
     o AS (SELECT o.series_id, o.t, LAG(o.t) OVER (PARTITION BY o.series_id ORDER BY o.t) AS prev, s.allowed
           FROM scope s JOIN observations o ON o.series_id = s.id AND o.t >= s.from_t AND o.t < :until)
     SELECT series_id, prev, t FROM o WHERE prev IS NOT NULL AND t - prev > allowed AND t > :start ORDER BY series_id, t`,
    { replacements: { scope: JSON.stringify(scope), start, until }, type: QueryTypes.SELECT },
  );
  const facts = new Map<number, RecordFacts>(edges.map((e) => [Number(e.id), { received: Number(e.n), stretches: [] }]));
  for (const g of gaps) facts.get(Number(g.series_id))!.stretches.push({ lastDataAt: Number(g.prev), backAt: Number(g.t) });
  for (const e of edges) {
    if (e.tail_t !== null && until - Number(e.tail_t) > allowanceOf(byId.get(Number(e.id))!))
      facts.get(Number(e.id))!.stretches.push({ lastDataAt: Number(e.tail_t), backAt: null });
  }
  return facts;
}

/**
 * The period report of the network (site null) or of one site, at `now`: every series' status, completeness and
 * late stretches; the alerts opened in the period with their first decision, its reason and the time it took;
 * settings and rule changes (who, when, why); each active rule's calibrated false-alarm rate; marks and shifts in
 * the period; the standing caution. Queries per series are indexed range reads (observations by series and time),
 * the rest one query per table over the period, so the cost grows with series, alerts and changes, not with the
 * record's length outside the period.
 */
export async function buildPeriodReport(period: Period, site: string | null = null, now = Date.now()): Promise<PeriodReport> {
  const sequelize = await db();
  const { start, end } = periodBounds(period);
  const until = Math.min(end, now);
  const wanted = site ? siteKey(site) : null;

  const allSeries = await sequelize.query<SeriesRow>(
    `SELECT s.id, s.slug, s.name, s.site, s.interval_ms, s.late_after_ms, (SELECT MIN(t) FROM observations o WHERE o.series_id = s.id) AS first_t
     FROM series s WHERE s.retired_at IS NULL OR s.retired_at >= :start ORDER BY s.name, s.id`,
    { replacements: { start: sqlDate(start) }, type: QueryTypes.SELECT },
  );
  const series = allSeries.filter((s) => wanted === null || siteKey(s.site) === wanted);
  const ids = series.map((s) => s.id);
  const idList = JSON.stringify(ids);
  const bySeries = new Map(series.map((s) => [s.id, s]));

  const [overview, alerts, openAtEnd, settingsChanges, ruleChanges, rules, marks] = await Promise.all([
    fetchSeriesOverview(null, now),
    sequelize.query<AlertRow>(
      `SELECT a.id, a.kind, a.series_id, si.slug AS site_slug, si.name AS site_name, a.severity, a.state, a.created_at, a.shift_time, a.shift_size, a.data_last_at, r.indicator,
         d.action AS decision_action, d.created_at AS decided_at, u.name AS decided_by, d.reason AS decision_reason, d.detail AS decision_note,
         (SELECT x.created_at FROM alert_events x WHERE x.alert_id = a.id AND x.action = 'data-returned' AND x.to_state = 'dismissed' ORDER BY x.id LIMIT 1) AS returned_at
       FROM alerts a
       LEFT JOIN sites si ON si.id = a.site_id
       LEFT JOIN alert_rules r ON r.id = a.rule_id
       LEFT JOIN alert_events d ON d.id = (SELECT e.id FROM alert_events e WHERE e.alert_id = a.id AND e.action IN ('confirm', 'dismiss') AND e.actor_id IS NOT NULL ORDER BY e.id LIMIT 1)
       LEFT JOIN users u ON u.id = d.actor_id
       WHERE (a.series_id IN (SELECT ids.value FROM ${jsonElements(sequelize, ':ids', 'ids', 'bigint')})
              OR a.site_id IN (SELECT x.site_id FROM series x WHERE x.id IN (SELECT ids.value FROM ${jsonElements(sequelize, ':ids', 'ids', 'bigint')})))
         AND a.created_at >= :start AND a.created_at < :end
       ORDER BY a.created_at, a.id`,
      { replacements: { ids: idList, start: sqlDate(start), end: sqlDate(end) }, type: QueryTypes.SELECT },
    ),
    sequelize.query<{ series_id: number; n: number }>(
      `SELECT series_id, COUNT(*) AS n FROM alerts
       WHERE series_id IN (SELECT ids.value FROM ${jsonElements(sequelize, ':ids', 'ids', 'bigint')}) AND created_at < :end AND (closed_at IS NULL OR closed_at >= :end)
       GROUP BY series_id`,
      { replacements: { ids: idList, end: sqlDate(end) }, type: QueryTypes.SELECT },
    ),
    sequelize.query<{ id: number; series_id: number; settings: string; reason: string | null; created_at: string; who: string | null; before: string | null }>(
      `SELECT c.id, c.series_id, ${jsonText(sequelize, 'c.settings')} AS settings, c.reason, c.created_at, u.name AS who,
         (SELECT ${jsonText(sequelize, 'p.settings')} FROM settings_changes p WHERE p.series_id = c.series_id AND p.id < c.id ORDER BY p.id DESC LIMIT 1) AS before
       FROM settings_changes c LEFT JOIN users u ON u.id = c.changed_by
       WHERE c.series_id IN (SELECT ids.value FROM ${jsonElements(sequelize, ':ids', 'ids', 'bigint')}) AND c.created_at >= :start AND c.created_at < :end ORDER BY c.created_at, c.id`,
      { replacements: { ids: idList, start: sqlDate(start), end: sqlDate(end) }, type: QueryTypes.SELECT },
    ),
    sequelize.query<{ action: string; entity_id: string; details: string; created_at: string; who: string | null; series_id: number | null }>(
      `SELECT l.action, l.entity_id, ${jsonText(sequelize, 'l.details')} AS details, l.created_at, u.name AS who,
         CASE WHEN l.entity = 'series' THEN s.id ELSE r.series_id END AS series_id
       FROM audit_log l LEFT JOIN users u ON u.id = l.actor_id
         LEFT JOIN alert_rules r ON l.entity = 'alert_rule' AND CAST(r.id AS TEXT) = l.entity_id
         LEFT JOIN series s ON l.entity = 'series' AND CAST(s.id AS TEXT) = l.entity_id
       WHERE (l.entity = 'alert_rule' AND l.action IN ('rule.create', 'rule.update', 'rule.threshold', 'rule.deactivate', 'rule.delete')
           OR l.entity = 'series' AND l.action = 'series.update')
         AND l.created_at >= :start AND l.created_at < :end ORDER BY l.created_at, l.id`,
      { replacements: { start: sqlDate(start), end: sqlDate(end) }, type: QueryTypes.SELECT },
    ),
    // The series' rules, then the rules on their sites' site-level indicators.
    sequelize.query<{ id: number; series_id: number | null; site_slug: string | null; indicator: string; severity: string }>(
      `SELECT r.id, r.series_id, st.slug AS site_slug, r.indicator, r.severity FROM alert_rules r LEFT JOIN sites st ON st.id = r.site_id
       WHERE r.active AND (r.series_id IN (SELECT ids.value FROM ${jsonElements(sequelize, ':ids', 'ids', 'bigint')})
         OR r.site_id IN (SELECT x.site_id FROM series x WHERE x.id IN (SELECT ids.value FROM ${jsonElements(sequelize, ':ids', 'ids', 'bigint')})))
       ORDER BY CASE WHEN r.series_id IS NULL THEN 1 ELSE 0 END, r.series_id, r.id`,
      { replacements: { ids: idList }, type: QueryTypes.SELECT },
    ),
    sequelize.query<{ series_id: number; kind: string; at: number; note: string; who: string | null }>(
      `SELECT m.series_id, m.kind, m.at, m.note, u.name AS who FROM marks m LEFT JOIN users u ON u.id = m.created_by
       WHERE m.series_id IN (SELECT ids.value FROM ${jsonElements(sequelize, ':ids', 'ids', 'bigint')}) AND m.at >= :start AND m.at < :end ORDER BY m.at`,
      { replacements: { ids: idList, start, end }, type: QueryTypes.SELECT },
    ),
  ]);
  const calibrations = await latestRuleCalibration(rules.map((r) => Number(r.id)));
  const overviewRow = new Map(overview.rows.map((r) => [r.id, r]));
  const openEnd = new Map(openAtEnd.map((r) => [Number(r.series_id), Number(r.n)]));

  const reportAlerts: ReportAlert[] = alerts.map((a) => {
    // A site alert is on the site's series together: named by its site.
    const s = a.series_id === null ? null : bySeries.get(Number(a.series_id))!;
    const opened = new Date(a.created_at).getTime();
    const decidedAt = a.decided_at ?? a.returned_at;
    return {
      id: Number(a.id),
      kind: a.kind,
      seriesSlug: s?.slug ?? '',
      seriesName: s?.name ?? `site ${a.site_name}`,
      site: s?.site ?? a.site_name ?? '',
      severity: a.severity,
      subject: alertSubject(a),
      openedAt: iso(opened),
      stateNow: a.state,
      decision: a.decision_action ? (a.decision_action === 'confirm' ? 'confirmed' : 'dismissed') : a.returned_at ? 'closed by itself (data returned)' : null,
      decidedAt: decidedAt ? isoOf(decidedAt) : null,
      decidedBy: a.decided_by,
      reason: a.decision_action ? a.decision_reason : null,
      note: a.decision_action ? a.decision_note : null,
      hoursToDecision: a.decided_at ? hours(new Date(a.decided_at).getTime() - opened) : null,
    };
  });
  const decided = reportAlerts.filter((a) => a.decidedBy !== null);
  const timing = durationSummary(decided.map((a) => a.hoursToDecision!));

  const late: LateStretch[] = [];
  const lateAlerts = await sequelize.query<{ id: number; series_id: number; data_last_at: number }>(
    `SELECT id, series_id, data_last_at FROM alerts WHERE kind = 'data-late' AND series_id IN (SELECT ids.value FROM ${jsonElements(sequelize, ':ids', 'ids', 'bigint')})`,
    { replacements: { ids: idList }, type: QueryTypes.SELECT },
  );
  const lateAlertOf = new Map(lateAlerts.map((a) => [`${a.series_id}:${Number(a.data_last_at)}`, Number(a.id)]));
  const seriesLines: ReportSeries[] = [];
  let received = 0;
  let expected = 0;
  const record = await recordFacts(series, start, until);
  const openedBySeries = new Map<string, number>();
  for (const a of reportAlerts) openedBySeries.set(a.seriesSlug, (openedBySeries.get(a.seriesSlug) ?? 0) + 1);
  for (const s of series) {
    const { received: n, stretches } = record.get(s.id)!;
    const since = s.first_t === null ? until : Math.max(start, Number(s.first_t));
    const share = completeness(n, s.interval_ms === null ? null : Number(s.interval_ms), since, until);
    const allowed = allowanceOf(s);
    let lateMs = 0;
    for (const stretch of stretches) {
      const stop = stretch.backAt ?? until;
      lateMs += Math.max(0, Math.min(stop, until) - Math.max(stretch.lastDataAt + allowed, start));
      late.push({
        seriesSlug: s.slug,
        seriesName: s.name,
        lastDataAt: iso(stretch.lastDataAt),
        backAt: stretch.backAt === null ? null : iso(stretch.backAt),
        silentHours: hours(stop - stretch.lastDataAt),
        alertId: lateAlertOf.get(`${s.id}:${stretch.lastDataAt}`) ?? null,
      });
    }
    received += n;
    expected += share.expected ?? 0;
    const current = overviewRow.get(s.id);
    seriesLines.push({
      id: s.id,
      slug: s.slug,
      name: s.name,
      site: s.site,
      intervalMs: s.interval_ms === null ? null : Number(s.interval_ms),
      stateNow: current?.state ?? 'retired',
      freshnessNow: current?.freshness ?? 'retired',
      lastDataAt: current?.lastDataAt ? iso(current.lastDataAt) : null,
      received: n,
      expected: share.expected,
      completeness: share.share,
      lateStretches: stretches.length,
      lateHours: hours(lateMs),
      alertsOpened: openedBySeries.get(s.slug) ?? 0,
      openAtEnd: openEnd.get(s.id) ?? 0,
    });
  }

  const changes: ReportChange[] = [
    ...settingsChanges.map((c) => ({
      at: isoOf(c.created_at),
      who: c.who ?? 'system',
      seriesSlug: bySeries.get(Number(c.series_id))!.slug,
      what: c.before === null ? 'analysis settings set' : 'analysis settings changed',
      detail: describeSettingsChange(c.before, c.settings),
      why: c.reason,
    })),
    ...ruleChanges
      .filter((c) => c.series_id !== null && bySeries.has(Number(c.series_id)))
      .flatMap((c) => {
        const details = parseJson(c.details);
        const change = c.action === 'series.update' ? describeQcChange(details) : describeRuleChange(c.action, Number(c.entity_id), details);
        return change ? [{ at: isoOf(c.created_at), who: c.who ?? 'system', seriesSlug: bySeries.get(Number(c.series_id))!.slug, ...change }] : [];
      }),
  ].sort((a, b) => a.at.localeCompare(b.at));

  return {
    period: { ...period, label: periodLabel(period) },
    site: site ? (series[0]?.site ?? site) : null,
    generatedAt: iso(now),
    caution: ANALYSIS_CAUTION,
    series: seriesLines,
    alerts: reportAlerts,
    decisions: {
      opened: reportAlerts.length,
      decided: decided.length,
      undecided: reportAlerts.filter((a) => a.decision === null).length,
      closedBySelf: reportAlerts.filter((a) => a.decidedBy === null && a.decision !== null).length,
      medianHoursToDecision: timing.medianHours,
      meanHoursToDecision: timing.meanHours,
    },
    completeness: { received, expected, share: expected > 0 ? Math.min(1, received / expected) : null },
    late,
    changes,
    calibrations: rules.map((r) => {
      const c = calibrations.get(Number(r.id));
      return {
        ruleId: Number(r.id),
        seriesSlug: r.series_id === null ? '' : bySeries.get(Number(r.series_id))!.slug,
        siteSlug: r.series_id === null ? r.site_slug : null,
        indicator: indicatorLabel(r.indicator),
        severity: r.severity,
        falseAlarmsPerYear: c?.falseAlarmsPerYear ?? null,
        interval: c?.interval ?? null,
        calibratedAt: c?.finishedAt ?? null,
      };
    }),
    marks: marks.map((m) => ({ seriesSlug: bySeries.get(Number(m.series_id))!.slug, kind: m.kind, at: iso(Number(m.at)), note: m.note, by: m.who })),
    shifts: alerts
      .filter((a) => a.kind === 'abrupt-shift')
      .map((a) => ({
        alertId: Number(a.id),
        seriesSlug: bySeries.get(Number(a.series_id))!.slug,
        at: a.shift_time === null ? '' : iso(Number(a.shift_time)),
        size: a.shift_size === null ? null : Number(a.shift_size),
        stateNow: a.state,
      })),
  };
}

function parseJson(text: string | null): Record<string, unknown> {
  if (!text) return {};
  try {
    const value: unknown = typeof text === 'string' ? JSON.parse(text) : text;
    return value && typeof value === 'object' ? (value as Record<string, unknown>) : {};
  } catch {
    return {};
  }
}

/** "window 0.5 → 0.4; detrend gaussian → linear": the settings that changed since the series' previous settings. */
function describeSettingsChange(before: string | null, after: string): string {
  // The first settings of a series are its starting point, not a change a reader weighs; the series page has them.
  if (before === null) return 'first settings of the series';
  return differences(parseJson(before), parseJson(after)) || 'no effective change';
}

/** One changed field as the report prints it: `window 0.5 → 0.4`. */
function changeText(key: string, before: unknown, after: unknown): string {
  return `${key} ${JSON.stringify(before ?? null)} → ${JSON.stringify(after ?? null)}`;
}

/** Every field whose value differs between two objects, as `changeText`s joined by "; " (empty when none). */
function differences(before: Record<string, unknown>, after: Record<string, unknown>): string {
  const keys = [...new Set([...Object.keys(before), ...Object.keys(after)])].filter((k) => JSON.stringify(before[k]) !== JSON.stringify(after[k]));
  return keys.map((k) => changeText(k, before[k], after[k])).join('; ');
}

/**
 * A change of a series' quality-control limits from its audit entry; other series edits (name, unit, analysis
 * settings, which have their own history above) are not threshold changes and leave no line.
 */
function describeQcChange(details: Record<string, unknown>): Pick<ReportChange, 'what' | 'detail' | 'why'> | null {
  if (!Array.isArray(details.fields) || !details.fields.includes('qc')) return null;
  const before = (details.qcBefore ?? {}) as Record<string, unknown>;
  const after = (details.qcAfter ?? {}) as Record<string, unknown>;
  return {
    what: 'quality-control limits changed',
    detail: differences(before, after) || 'QC tests switched off',
    why: typeof details.reason === 'string' ? details.reason : null,
  };
}

const RULE_WORDS: Record<string, string> = {
  'rule.create': 'rule created',
  'rule.update': 'rule changed',
  'rule.threshold': 'rule threshold set from a backtest',
  'rule.deactivate': 'rule retired',
  'rule.delete': 'rule deleted',
};

/**
 * A rule change from its audit entry. The "why" is what the change itself records: a note or reason when one was
 * given, the backtest a threshold was chosen from; otherwise none was asked for.
 */
function describeRuleChange(action: string, ruleId: number, details: Record<string, unknown>): Pick<ReportChange, 'what' | 'detail' | 'why'> {
  const source = action === 'rule.threshold' && details.jobId ? `chosen from backtest #${String(details.jobId)}` : null;
  const given = typeof details.reason === 'string' ? details.reason : typeof details.note === 'string' ? details.note : null;
  const why = given && source ? `${given} (${source})` : (given ?? source);
  let detail = '';
  if (action === 'rule.update' && details.changes && typeof details.changes === 'object') {
    const before = (details.before ?? {}) as Record<string, unknown>;
    detail = Object.entries(details.changes as Record<string, unknown>)
      .map(([k, v]) => changeText(k, before[k], v))
      .join('; ');
  } else if (action === 'rule.threshold') detail = `threshold ${JSON.stringify(details.before ?? null)} → ${JSON.stringify(details.after ?? null)}`;
  else if (action === 'rule.create') detail = `${indicatorLabel(String(details.indicator ?? ''))}, min tau ${String(details.minTau ?? '?')}`;
  return { what: `${RULE_WORDS[action] ?? action} (#${ruleId})`, detail, why };
}
