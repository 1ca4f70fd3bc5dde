import { AnalysisInputError } from './errors';
import type { TimeKind } from './time-kind';

/**
 * How long a window, bandwidth or span is: a number = fraction of the analysed stretch; "<n> points"
 * (also "<n> point", "<n>pts"); or an ISO 8601 duration ("P90D", "P2Y", "PT12H", "P1Y6M", "P2W").
 */
export type Extent = number | string;

export type ParsedExtent = { kind: 'fraction'; value: number } | { kind: 'points'; value: number } | { kind: 'duration'; ms: number };

const DAY_MS = 86_400_000;
/** Mean Gregorian year (146,097 days / 400 years) and month (its twelfth), so a duration has one length wherever it falls. */
export const YEAR_MS = 365.2425 * DAY_MS;
export const MONTH_MS = YEAR_MS / 12;

const POINTS = /^\s*(\d+)\s*(?:points?|pts)\s*$/i;
const NUM = '(\\d+(?:[.,]\\d+)?)';
const DURATION = new RegExp(`^P(?:${NUM}Y)?(?:${NUM}M)?(?:${NUM}W)?(?:${NUM}D)?(?:T(?:${NUM}H)?(?:${NUM}M)?(?:${NUM}S)?)?$`);

/**
 * Reads an extent. ISO 8601 durations are taken at fixed lengths: a year is 365.2425 days and a month
 * 30.436875 days (the mean Gregorian year and month), a week 7 days, a day 86,400 s (UTC, no leap seconds);
 * a decimal fraction (comma or point) is allowed on any component. Throws AnalysisInputError for anything else.
 * O(length of the text). Source: ISO 8601-1:2019, Sec. 5.5.2 (durations); mean Gregorian year, common practice.
 */
export function parseExtent(extent: Extent): ParsedExtent {
  if (typeof extent === 'number') {
    if (!(extent > 0) || !Number.isFinite(extent)) throw new AnalysisInputError(`an extent given as a fraction must be a positive number (got ${extent})`);
    return { kind: 'fraction', value: extent };
  }
  const p = POINTS.exec(extent);
  if (p) {
    const value = Number(p[1]);
    if (!(value > 0)) throw new AnalysisInputError(`"${extent}": the number of points must be positive`);
    return { kind: 'points', value };
  }
  const text = extent.trim().toUpperCase();
  const d = DURATION.exec(text);
  if (!d || text === 'P' || text.endsWith('T')) {
    throw new AnalysisInputError(`"${extent}" is not an extent: give a fraction, "<n> points" or an ISO 8601 duration such as P90D, P2Y or PT12H`);
  }
  const unit = [YEAR_MS, MONTH_MS, 7 * DAY_MS, DAY_MS, 3_600_000, 60_000, 1000];
  let ms = 0;
  for (let k = 0; k < unit.length; k++) if (d[k + 1] !== undefined) ms += Number(d[k + 1].replace(',', '.')) * unit[k];
  if (!(ms > 0)) throw new AnalysisInputError(`"${extent}": the duration must be longer than zero`);
  return { kind: 'duration', ms };
}

/** Whether a value is a readable extent (for settings validation). O(length). */
export function isExtent(extent: unknown): extent is Extent {
  if (typeof extent !== 'number' && typeof extent !== 'string') return false;
  try {
    parseExtent(extent);
    return true;
  } catch {
    return false;
  }
}

/**
 * An extent in grid points (not rounded): fraction × stretchPoints, the points themselves, or the duration
 * divided by the sampling interval (which must then be in UTC milliseconds; numeric times cannot carry
 * a duration). O(1).
 */
export function extentPoints(extent: Extent, stretchPoints: number, intervalInTimeUnit: number, timeKind: TimeKind): number {
  const e = parseExtent(extent);
  if (e.kind === 'fraction') return e.value * stretchPoints;
  if (e.kind === 'points') return e.value;
  if (timeKind !== 'utc-ms') throw new AnalysisInputError(`the duration "${extent}" needs calendar timestamps (ISO 8601), not plain numeric times`);
  return e.ms / intervalInTimeUnit;
}
