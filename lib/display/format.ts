/**
 * Number and time formatting shared by every screen, the report and the exports, so a tau or an instant reads
 * the same everywhere. Pure functions; safe in server and client components.
 */

/** Kendall's tau to 2 decimals (its sampling error at a few hundred points is already ~0.05). */
export function formatTau(tau: number | null | undefined): string {
  return tau === null || tau === undefined || !Number.isFinite(tau) ? '–' : tau.toFixed(2);
}

/** A p-value to 3 significant figures; below 0.001 as "< 0.001" because the surrogate counts cannot resolve less. */
export function formatP(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return '–';
  if (p < 0.001) return '< 0.001';
  return Number(p.toPrecision(3)).toString();
}

/** A measured value with (at most) 4 significant figures and its unit; trailing zeros are dropped in both forms. */
export function formatValue(value: number | null | undefined, unit = ''): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '–';
  const abs = Math.abs(value);
  const text = abs !== 0 && (abs >= 1e6 || abs < 1e-3) ? value.toExponential(3).replace(/\.?0+e/, 'e') : Number(value.toPrecision(4)).toString();
  return unit ? `${text} ${unit}` : text;
}

/**
 * One formatter per time zone: building an Intl.DateTimeFormat costs about a millisecond, and chart axes and
 * tables format thousands of instants. An unknown zone falls back to UTC (the zone is validated on input anyway).
 */
const formatters = new Map<string, { zone: string; format: Intl.DateTimeFormat }>();

function formatterFor(timeZone: string): { zone: string; format: Intl.DateTimeFormat } {
  let entry = formatters.get(timeZone);
  if (!entry) {
    const options = { year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', hourCycle: 'h23' } as const;
    try {
      entry = { zone: timeZone, format: new Intl.DateTimeFormat('en-CA', { ...options, timeZone }) };
    } catch {
      entry = { zone: 'UTC', format: new Intl.DateTimeFormat('en-CA', { ...options, timeZone: 'UTC' }) };
    }
    formatters.set(timeZone, entry);
  }
  return entry;
}

/** An instant in the series' own time zone (day and minute), e.g. "2025-03-14 08:30 Europe/Oslo". */
export function formatLocal(t: number | Date | null | undefined, timeZone: string, withZone = true): string {
  if (t === null || t === undefined) return '–';
  const date = typeof t === 'number' ? new Date(t) : t;
  if (Number.isNaN(date.getTime())) return '–';
  const { zone, format } = formatterFor(timeZone);
  const parts: Record<string, string> = {};
  for (const part of format.formatToParts(date)) parts[part.type] = part.value;
  const text = `${parts.year}-${parts.month}-${parts.day} ${parts.hour}:${parts.minute}`;
  return withZone ? `${text} ${zone}` : text;
}

/** A date only, in the series' time zone: axis ticks of long records. */
export function formatLocalDate(t: number, timeZone: string): string {
  return formatLocal(t, timeZone, false).slice(0, 10);
}

/** ISO 8601 UTC, shown on hover beside every local time. */
export function formatUtc(t: number | Date | null | undefined): string {
  if (t === null || t === undefined) return '';
  const date = typeof t === 'number' ? new Date(t) : t;
  return Number.isNaN(date.getTime()) ? '' : `${date.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
}

/** "3 h ago", "5 d ago": how long since an instant, coarse on purpose. */
export function formatAge(ms: number): string {
  const minutes = Math.round(ms / 60_000);
  if (minutes < 60) return `${Math.max(minutes, 0)} min`;
  const hours = Math.round(minutes / 60);
  if (hours < 48) return `${hours} h`;
  return `${Math.round(hours / 24)} d`;
}
