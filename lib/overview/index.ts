import { QueryTypes } from 'sequelize';
import { db, OPEN_ALERT_STATES } from '@/models';
import { INDICATOR_DIRECTIONS, orientedTau, type TrendDirection } from '@/lib/engine/direction';
import { INDICATOR_NAMES, type IndicatorName } from '@/lib/engine/settings';
import { sparkline, sparkPath } from '@/lib/display/sparkline';
import { cachedRead } from '@/lib/db/read-cache';
import { isPostgres, jsonElements, jsonObjectOfPaths, jsonPath, jsonText } from '@/lib/db/dialect';

import { freshnessOf, type Freshness } from '@/lib/alerts/lateness';

// Lateness has one definition, shared with the data-late alerts.
export { LATE_AFTER_INTERVALS, LATE_AFTER_MS_IRREGULAR, freshnessOf, type Freshness } from '@/lib/alerts/lateness';
/** quiet: no rule passes; watch/warning: a rule of that severity passes now but no alert is open; alert: one is open. */
export type SeriesState = 'not-analysed' | 'quiet' | 'watch' | 'warning' | 'alert';

export interface OverviewIndicator {
  name: IndicatorName;
  tau: number | null;
  /** the direction the indicator is tested in (its own under slowing down) */
  direction: TrendDirection;
  /** tau seen in that direction (−tau for a falling indicator, |tau| two-sided): what "most pressing" sorts by */
  orientedTau: number | null;
  p: number | null;
  /** surrogate p when the series runs surrogates, else the Kendall test's p (descriptive: assumes independent values) */
  pKind: 'surrogate' | 'kendall';
  /** Benjamini–Hochberg q-value of the latest cycle (rules with a false-discovery level only), else null */
  q: number | null;
}

export interface OverviewRow {
  id: number;
  slug: string;
  name: string;
  /** the site's name ('' for none) and its slug, the address of its page */
  site: string;
  siteSlug: string | null;
  unit: string;
  timeZone: string;
  intervalMs: number | null;
  /** the series' own lateness setting (null = derived from the interval) */
  lateAfterMs: number | null;
  lastDataAt: number | null;
  freshness: Freshness;
  state: SeriesState;
  openAlerts: number;
  openSeverity: 'watch' | 'warning' | null;
  analysedAt: string | null;
  indicators: OverviewIndicator[];
  /** the curve's recent shape as an SVG path (see `sparkPath` in lib/display/sparkline) */
  spark: { indicator: string; points: number; path: string } | null;
}

export interface QueueCounts {
  triage: number;
  escalated: number;
  mine: number;
  open: number;
}

/** The open alerts on a site's site-level indicators (rules on the site, not on one of its series). */
export interface SiteAlertGroup {
  site: string;
  siteSlug: string;
  count: number;
  severity: 'watch' | 'warning';
}

export interface SeriesOverview {
  rows: OverviewRow[];
  queues: QueueCounts;
  sites: string[];
  siteAlerts: SiteAlertGroup[];
  generatedAt: number;
}

function sparkOf(indicator: string, curve: (number | null)[]): Spark {
  const values = sparkline(curve);
  return { indicator, points: values.length, path: sparkPath(values) };
}

interface SeriesRow {
  id: number;
  slug: string;
  name: string;
  site: string;
  site_slug: string | null;
  unit: string;
  time_zone: string;
  interval_ms: number | null;
  late_after_ms: number | null;
  last_t: number | null;
  snap_id: number | null;
  rule_indicator: string | null;
  snap_created: string | null;
  kendall: string | null;
  surrogate_p: string | null;
}
interface RuleRow {
  series_id: number;
  indicator: string;
  severity: 'watch' | 'warning';
  passed: number | null;
  q_value: number | null;
}
interface AlertCountRow {
  series_id: number;
  severity: 'watch' | 'warning';
  state: string;
  assignee_id: number | null;
  n: number;
}

type Spark = OverviewRow['spark'];

/**
 * Sparklines by snapshot and indicator. Snapshots never change once written, and their curves are the one large
 * column (hundreds of kB each), so each is read once per process and only new snapshots cost a read.
 */
const sparkCache = new Map<string, Spark>();
const SPARK_CACHE_LIMIT = 5000;

async function sparklines(rows: SeriesRow[]): Promise<Map<number, Spark>> {
  const key = (r: SeriesRow) => `${r.snap_id}:${r.rule_indicator ?? ''}`;
  const missing = rows.filter((r) => r.snap_id !== null && !sparkCache.has(key(r)));
  if (missing.length) {
    const sequelize = await db();
    // Per (snapshot, indicator) pair: that indicator's curve, else the first indicator of the snapshot's settings.
    const [preferred, fallbackName] = isPostgres(sequelize)
      ? [`(a.curves -> 'indicators' -> (p.value ->> 1))`, `(a.settings -> 'indicators' ->> 0)`]
      : // A series without a rule asks for indicator '': '$.indicators.' is no JSON path to SQLite, so that case is NULL.
        [
          `CASE WHEN json_extract(p.value, '$[1]') <> '' THEN json_extract(a.curves, '$.indicators.' || json_extract(p.value, '$[1]')) END`,
          `json_extract(a.settings, '$.indicators[0]')`,
        ];
    const fallback = isPostgres(sequelize)
      ? `(a.curves -> 'indicators' -> (a.settings -> 'indicators' ->> 0))`
      : `json_extract(a.curves, '$.indicators.' || json_extract(a.settings, '$.indicators[0]'))`;
    // Absent, not JSON null: PostgreSQL's -> gives SQL NULL only for an absent key, SQLite's json_type likewise.
    const absent = isPostgres(sequelize)
      ? `${preferred} IS NULL`
      : `(json_extract(p.value, '$[1]') = '' OR json_type(a.curves, '$.indicators.' || json_extract(p.value, '$[1]')) IS NULL)`;
    const found = await sequelize.query<{ id: number; preferred: string | null; fallback_name: string | null; fallback: string | null }>(
      `SELECT a.id, ${jsonText(sequelize, preferred)} AS preferred, ${fallbackName} AS fallback_name,
         CASE WHEN ${absent} THEN ${jsonText(sequelize, fallback)} END AS fallback
       FROM ${jsonElements(sequelize, ':pairs', 'p', 'json')} JOIN analysis_snapshots a ON a.id = ${jsonPath(sequelize, 'p.value', '$[0]', 'bigint')}`,
      { type: QueryTypes.SELECT, replacements: { pairs: JSON.stringify(missing.map((r) => [r.snap_id, r.rule_indicator ?? ''])) } },
    );
    const byId = new Map(found.map((f) => [f.id, f]));
    for (const r of missing) {
      const f = byId.get(r.snap_id!);
      const spark: Spark = f?.preferred
        ? sparkOf(r.rule_indicator!, JSON.parse(f.preferred))
        : f?.fallback && f.fallback_name
          ? sparkOf(f.fallback_name, JSON.parse(f.fallback))
          : null;
      if (sparkCache.size >= SPARK_CACHE_LIMIT) sparkCache.delete(sparkCache.keys().next().value!);
      sparkCache.set(key(r), spark);
    }
  }
  return new Map(rows.map((r) => [r.id, r.snap_id === null ? null : (sparkCache.get(key(r)) ?? null)]));
}

const OPEN = OPEN_ALERT_STATES.map((s) => `'${s}'`).join(',');
const SURROGATE_P = INDICATOR_NAMES.map((name): [string, string] => [name, `$.significance.${name}.p`]);

/**
 * The morning view of the whole network. What is stored is the same for everyone and is answered from the read
 * cache until the next commit (people open this screen at about the same time, mostly between two deliveries of
 * data); the asker's own queue count and each series' freshness (which depends on the clock) are worked out on
 * every call. O(series + open-alert groups) per call once cached.
 */
export async function fetchSeriesOverview(actorId: number | null = null, now = Date.now()): Promise<SeriesOverview> {
  const stored = await cachedRead('overview', loadOverview);
  const queues: QueueCounts = { triage: 0, escalated: 0, mine: 0, open: 0 };
  for (const group of stored.alertGroups) {
    const n = Number(group.n);
    queues.open += n;
    if (group.state === 'escalated') queues.escalated += n;
    else queues.triage += n;
    if (actorId !== null && group.assignee_id === actorId) queues.mine += n;
  }
  return {
    rows: stored.rows.map((row) => ({ ...row, freshness: freshnessOf(row.lastDataAt, row.intervalMs, now, row.lateAfterMs) })),
    queues,
    sites: stored.sites,
    siteAlerts: stored.siteAlerts,
    generatedAt: now,
  };
}

interface StoredOverview {
  rows: Omit<OverviewRow, 'freshness'>[];
  sites: string[];
  siteAlerts: SiteAlertGroup[];
  alertGroups: AlertCountRow[];
}

interface OpenCount {
  count: number;
  severity: 'watch' | 'warning';
}

/** A running count of open alerts with one more group of `n` added: the severity is the worst seen, warning over watch. */
function addOpen(current: OpenCount | undefined, severity: 'watch' | 'warning', n: number): OpenCount {
  return { count: (current?.count ?? 0) + n, severity: current?.severity === 'warning' || severity === 'warning' ? 'warning' : 'watch' };
}

/**
 * Four aggregate queries run in parallel (series with their last observation and latest snapshot; active rules
 * with their latest evaluation; open alerts grouped by series, severity, state and assignee; open site alerts by
 * site and severity), each using an index per series, rule or site, so the cost grows with the number of series and rules, not with observations or alerts.
 * Only the pieces of the snapshot JSON the table shows are extracted in SQL; sparklines come from the snapshot
 * curves once per snapshot (see `sparklines`).
 */
async function loadOverview(): Promise<StoredOverview> {
  const sequelize = await db();
  const [series, rules, alerts, siteAlertRows] = await Promise.all([
    sequelize.query<SeriesRow>(
      `WITH base AS (
         SELECT s.*,
           (SELECT MAX(t) FROM observations o WHERE o.series_id = s.id) AS last_t,
           (SELECT MAX(id) FROM analysis_snapshots x WHERE x.series_id = s.id AND x.status = 'ok') AS snap_id,
           (SELECT indicator FROM alert_rules r WHERE r.series_id = s.id AND r.active ORDER BY r.id LIMIT 1) AS rule_indicator
         FROM series s WHERE s.retired_at IS NULL)
       SELECT b.id, b.slug, b.name, b.site, st.slug AS site_slug, b.unit, b.time_zone, b.interval_ms, b.late_after_ms, b.last_t, b.snap_id, b.rule_indicator,
         a.created_at AS snap_created,
         ${jsonPath(sequelize, 'a.summary', '$.kendall')} AS kendall,
         ${jsonObjectOfPaths(sequelize, 'a.summary', SURROGATE_P)} AS surrogate_p
       FROM base b LEFT JOIN analysis_snapshots a ON a.id = b.snap_id LEFT JOIN sites st ON st.id = b.site_id
       ORDER BY b.name`,
      { type: QueryTypes.SELECT },
    ),
    sequelize.query<RuleRow>(
      `SELECT r.series_id, r.indicator, r.severity, e.passed, e.q_value
       FROM alert_rules r
       LEFT JOIN rule_evaluations e ON e.id = (SELECT id FROM rule_evaluations z WHERE z.rule_id = r.id ORDER BY z.snapshot_id DESC LIMIT 1)
       WHERE r.active AND r.series_id IS NOT NULL
       ORDER BY r.id`,
      { type: QueryTypes.SELECT },
    ),
    sequelize.query<AlertCountRow>(
      `SELECT series_id, severity, state, assignee_id, COUNT(*) AS n
       FROM alerts WHERE state IN (${OPEN}) GROUP BY series_id, severity, state, assignee_id`,
      { type: QueryTypes.SELECT },
    ),
    sequelize.query<{ site: string; site_slug: string; severity: 'watch' | 'warning'; n: number }>(
      `SELECT st.name AS site, st.slug AS site_slug, a.severity, COUNT(*) AS n
       FROM alerts a JOIN sites st ON st.id = a.site_id
       WHERE a.series_id IS NULL AND a.state IN (${OPEN}) GROUP BY st.name, st.slug, a.severity`,
      { type: QueryTypes.SELECT },
    ),
  ]);
  const siteAlertsBySlug = new Map<string, SiteAlertGroup>();
  for (const row of siteAlertRows) {
    const current = siteAlertsBySlug.get(row.site_slug);
    siteAlertsBySlug.set(row.site_slug, { site: row.site, siteSlug: row.site_slug, ...addOpen(current, row.severity, Number(row.n)) });
  }

  const sparks = await sparklines(series);
  const rulesBySeries = new Map<number, RuleRow[]>();
  for (const rule of rules) rulesBySeries.set(rule.series_id, [...(rulesBySeries.get(rule.series_id) ?? []), rule]);
  const openBySeries = new Map<number, OpenCount>();
  for (const row of alerts) openBySeries.set(row.series_id, addOpen(openBySeries.get(row.series_id), row.severity, Number(row.n)));

  const rows = series.map((s): StoredOverview['rows'][number] => {
    const kendall = (s.kendall ? JSON.parse(s.kendall) : {}) as Record<string, { tau: number | null; p: number | null; direction?: TrendDirection }>;
    const surrogate = (s.surrogate_p ? JSON.parse(s.surrogate_p) : {}) as Record<string, number | null>;
    const seriesRules = rulesBySeries.get(s.id) ?? [];
    const names = [...new Set(seriesRules.map((r) => r.indicator))].filter((n): n is IndicatorName => n in kendall);
    const spark = sparks.get(s.id) ?? null;
    const shown = names.length ? names : spark && spark.indicator in kendall ? [spark.indicator as IndicatorName] : [];
    const open = openBySeries.get(s.id);
    const passing = seriesRules.filter((r) => Number(r.passed) === 1);
    const state: SeriesState = open
      ? 'alert'
      : passing.some((r) => r.severity === 'warning')
        ? 'warning'
        : passing.length
          ? 'watch'
          : s.snap_created
            ? 'quiet'
            : 'not-analysed';
    const lastDataAt = s.last_t === null ? null : Number(s.last_t);
    const intervalMs = s.interval_ms === null ? null : Number(s.interval_ms);
    return {
      id: s.id,
      slug: s.slug,
      name: s.name,
      site: s.site,
      siteSlug: s.site_slug,
      unit: s.unit,
      timeZone: s.time_zone,
      intervalMs,
      lateAfterMs: s.late_after_ms === null ? null : Number(s.late_after_ms),
      lastDataAt,
      state,
      openAlerts: open?.count ?? 0,
      openSeverity: open?.severity ?? null,
      analysedAt: s.snap_created ? new Date(s.snap_created).toISOString() : null,
      indicators: shown.map((name) => {
        const sp = surrogate[name];
        const q = seriesRules.find((r) => r.indicator === name && r.q_value !== null)?.q_value ?? null;
        // Snapshots from before directions were stored were tested in the upper tail.
        const direction = kendall[name]?.direction ?? INDICATOR_DIRECTIONS[name];
        const tau = kendall[name]?.tau ?? null;
        const trend = { name, tau, direction, orientedTau: tau === null ? null : orientedTau(tau, direction), q };
        return sp !== null && sp !== undefined
          ? { ...trend, p: sp, pKind: 'surrogate' as const }
          : { ...trend, p: kendall[name]?.p ?? null, pKind: 'kendall' as const };
      }),
      spark,
    };
  });
  const sites = [...new Set(rows.map((r) => r.site).filter(Boolean))].sort();
  const siteAlerts = [...siteAlertsBySlug.values()].sort((a, b) => a.site.localeCompare(b.site));
  return { rows, sites, siteAlerts, alertGroups: alerts };
}
