import Papa from 'papaparse';

/**
 * The period report as it crosses to screens, mail and downloads (instants as ISO 8601 strings), and the pure
 * parts of its assembly: period arithmetic, completeness, time to decision, CSV tables. No database imports, so
 * components may import it.
 */

export const PERIOD_KINDS = ['month', 'quarter', 'year'] as const;
export type PeriodKind = (typeof PERIOD_KINDS)[number];

export interface Period {
  /** first day, YYYY-MM-DD (UTC) */
  from: string;
  /** last day, YYYY-MM-DD (UTC), inclusive */
  to: string;
}

const DAY = 86_400_000;

function isoDay(ms: number): string {
  return new Date(ms).toISOString().slice(0, 10);
}

/** Epoch ms of the period's first instant and of the instant after its last day: [start, end). */
export function periodBounds(period: Period): { start: number; end: number } {
  return { start: Date.parse(`${period.from}T00:00:00Z`), end: Date.parse(`${period.to}T00:00:00Z`) + DAY };
}

/** The calendar month, quarter or year (UTC) containing `at`. */
export function periodContaining(kind: PeriodKind, at: number): Period {
  const d = new Date(at);
  const year = d.getUTCFullYear();
  const firstMonth = kind === 'year' ? 0 : kind === 'quarter' ? Math.floor(d.getUTCMonth() / 3) * 3 : d.getUTCMonth();
  const months = kind === 'year' ? 12 : kind === 'quarter' ? 3 : 1;
  const start = Date.UTC(year, firstMonth, 1);
  return { from: isoDay(start), to: isoDay(Date.UTC(year, firstMonth + months, 1) - DAY) };
}

/** The last complete month, quarter or year before `now`: what a scheduled report covers. */
export function previousPeriod(kind: PeriodKind, now: number): Period {
  const current = periodContaining(kind, now);
  return periodContaining(kind, periodBounds(current).start - DAY);
}

/** A plain name of a period: "2026-Q1", "March 2026", "2026", else "from … to …". */
export function periodLabel(period: Period): string {
  for (const kind of PERIOD_KINDS) {
    const whole = periodContaining(kind, periodBounds(period).start);
    if (whole.from !== period.from || whole.to !== period.to) continue;
    const start = new Date(periodBounds(period).start);
    if (kind === 'year') return String(start.getUTCFullYear());
    if (kind === 'quarter') return `${start.getUTCFullYear()}-Q${Math.floor(start.getUTCMonth() / 3) + 1}`;
    return start.toLocaleString('en-GB', { month: 'long', year: 'numeric', timeZone: 'UTC' });
  }
  return `${period.from} to ${period.to}`;
}

/**
 * Share of expected observations received: n / ⌈(until − since) / interval⌉ over the part of the period the series
 * could deliver in (from its first observation or the period's start, whichever is later, to the period's end or
 * now, whichever is earlier). Null for irregular records (nothing is expected) or when no time was covered. Capped
 * at 1 (a denser record than the nominal interval is complete). O(1).
 */
export function completeness(received: number, intervalMs: number | null, since: number, until: number): { expected: number | null; share: number | null } {
  if (!intervalMs || !(until > since)) return { expected: null, share: null };
  const expected = Math.ceil((until - since) / intervalMs);
  return { expected, share: Math.min(1, received / expected) };
}

/** Median and mean of durations in hours; nulls when there are none. O(n log n). */
export function durationSummary(hours: number[]): { count: number; medianHours: number | null; meanHours: number | null } {
  if (!hours.length) return { count: 0, medianHours: null, meanHours: null };
  const sorted = [...hours].sort((a, b) => a - b);
  const mid = sorted.length >> 1;
  const median = sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
  return { count: hours.length, medianHours: median, meanHours: hours.reduce((s, h) => s + h, 0) / hours.length };
}

export interface ReportSeries {
  id: number;
  slug: string;
  name: string;
  site: string;
  intervalMs: number | null;
  /** the state now (as the overview shows it) — a report of a past period still says where things stand */
  stateNow: string;
  freshnessNow: string;
  lastDataAt: string | null;
  received: number;
  expected: number | null;
  completeness: number | null;
  lateStretches: number;
  /** hours of silence beyond the lateness allowance inside the period */
  lateHours: number;
  alertsOpened: number;
  /** alerts open at the period's end */
  openAtEnd: number;
}

export interface ReportAlert {
  id: number;
  kind: string;
  seriesSlug: string;
  seriesName: string;
  site: string;
  severity: string;
  /** the rule's indicator label, or what a rule-less alert reports */
  subject: string;
  openedAt: string;
  stateNow: string;
  /** the first decision (confirm or dismiss) by a person, or the alert closing itself */
  decision: string | null;
  decidedAt: string | null;
  decidedBy: string | null;
  reason: string | null;
  note: string | null;
  hoursToDecision: number | null;
}

export interface LateStretch {
  seriesSlug: string;
  seriesName: string;
  lastDataAt: string;
  /** first observation after the silence; null when still silent at the period's end */
  backAt: string | null;
  silentHours: number;
  /** the data-late alert raised for it, when the freshness watch raised one */
  alertId: number | null;
}

export interface ReportChange {
  at: string;
  who: string;
  seriesSlug: string | null;
  what: string;
  detail: string;
  why: string | null;
}

export interface ReportCalibration {
  ruleId: number;
  /** '' for a rule on a site's site-level indicators (then `siteSlug`) */
  seriesSlug: string;
  /** the site of a site rule, which carries no calibration: backtests replay one series */
  siteSlug: string | null;
  indicator: string;
  severity: string;
  falseAlarmsPerYear: number | null;
  interval: [number, number] | null;
  calibratedAt: string | null;
}

export interface ReportMark {
  seriesSlug: string;
  kind: string;
  at: string;
  note: string;
  by: string | null;
}

export interface ReportShift {
  alertId: number;
  seriesSlug: string;
  at: string;
  size: number | null;
  stateNow: string;
}

export interface PeriodReport {
  period: Period & { label: string };
  /** null = the whole network */
  site: string | null;
  generatedAt: string;
  caution: string;
  series: ReportSeries[];
  alerts: ReportAlert[];
  decisions: {
    opened: number;
    decided: number;
    undecided: number;
    closedBySelf: number;
    medianHoursToDecision: number | null;
    meanHoursToDecision: number | null;
  };
  completeness: { received: number; expected: number; share: number | null };
  late: LateStretch[];
  changes: ReportChange[];
  calibrations: ReportCalibration[];
  marks: ReportMark[];
  shifts: ReportShift[];
}

export const REPORT_TABLES = ['alerts', 'series', 'late', 'changes', 'calibrations', 'marks'] as const;
export type ReportTable = (typeof REPORT_TABLES)[number];

const COLUMNS: { [K in ReportTable]: { rows: (r: PeriodReport) => object[] } } = {
  alerts: { rows: (r) => r.alerts },
  series: { rows: (r) => r.series },
  late: { rows: (r) => r.late },
  changes: { rows: (r) => r.changes },
  calibrations: { rows: (r) => r.calibrations.map((c) => ({ ...c, interval: c.interval ? c.interval.join('–') : null })) },
  marks: { rows: (r) => r.marks },
};

/** Header names of each table, so an empty table still downloads with its columns. */
const HEADERS: Record<ReportTable, string[]> = {
  alerts: [
    'id',
    'kind',
    'seriesSlug',
    'seriesName',
    'site',
    'severity',
    'subject',
    'openedAt',
    'stateNow',
    'decision',
    'decidedAt',
    'decidedBy',
    'reason',
    'note',
    'hoursToDecision',
  ],
  series: [
    'id',
    'slug',
    'name',
    'site',
    'intervalMs',
    'stateNow',
    'freshnessNow',
    'lastDataAt',
    'received',
    'expected',
    'completeness',
    'lateStretches',
    'lateHours',
    'alertsOpened',
    'openAtEnd',
  ],
  late: ['seriesSlug', 'seriesName', 'lastDataAt', 'backAt', 'silentHours', 'alertId'],
  changes: ['at', 'who', 'seriesSlug', 'what', 'detail', 'why'],
  calibrations: ['ruleId', 'seriesSlug', 'siteSlug', 'indicator', 'severity', 'falseAlarmsPerYear', 'interval', 'calibratedAt'],
  marks: ['seriesSlug', 'kind', 'at', 'note', 'by'],
};

/** One table of the report as CSV (RFC 4180 through papaparse), header first; empty cells for nulls. */
export function periodReportCsv(report: PeriodReport, table: ReportTable = 'alerts'): string {
  const rows = COLUMNS[table].rows(report) as Record<string, unknown>[];
  const fields = HEADERS[table];
  return Papa.unparse({ fields, data: rows.map((row) => fields.map((f) => row[f] ?? '')) }, { newline: '\r\n' }) + '\r\n';
}

/** The download's file name: brinkwatch-report-<site or network>-<from>-<to>-<table>.csv */
export function periodCsvName(report: Pick<PeriodReport, 'period' | 'site'>, table: ReportTable): string {
  const scope =
    (report.site ?? 'network')
      .toLowerCase()
      .replace(/[^a-z0-9]+/g, '-')
      .replace(/^-|-$/g, '') || 'site';
  return `brinkwatch-report-${scope}-${report.period.from}-${report.period.to}-${table}.csv`;
}
