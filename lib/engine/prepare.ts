import { AnalysisInputError } from './errors';
import { extentPoints, type Extent } from './extent';
import type { TimeKind } from './time-kind';

export interface GapReport {
  /** first and last missing grid instant */
  from: number;
  to: number;
  points: number;
  filled: boolean;
}

export interface PreparationQuality {
  observations: number;
  /** grid bins holding more than one observation (averaged) */
  binnedBins: number;
  filledPoints: number;
  gaps: GapReport[];
  droppedBeforeStretch: number;
  /** missing points at either end of the record, which cannot be interpolated and are left out */
  trimmedEnds: number;
  /** points before the trailing analysis span */
  droppedBeforeSpan: number;
  /** runs of exactly constant values (a stuck sensor), at least FLAT_RUN_MIN points: windows inside one are not judged */
  flatRuns: FlatRun[];
  /** changes of the sampling interval found in the record (detectSamplingChanges) */
  samplingChanges: SamplingChange[];
  /** what was done about them: the record starts after the last ('start-after'), or the finer parts were subsampled */
  samplingHandling: SamplingHandling | null;
  /** observations before the last sampling change, left out under 'start-after' */
  droppedBeforeSampling: number;
}

export interface FlatRun {
  /** first and last instant of the run */
  from: number;
  to: number;
  points: number;
}

export interface SamplingChange {
  /** first observation on the new interval */
  time: number;
  /** median spacing before and after, in the unit of time */
  before: number;
  after: number;
}

export type SamplingHandling = 'start-after' | 'subsample';

/** Why the prepared record starts where it does (the analysis may start later, after a shift or a break). */
export type PreparedStart = 'record-start' | 'span' | 'gap' | 'sampling';

/** Shortest run of identical consecutive values reported as a stuck sensor: the shortest window that could lie inside it. */
export const FLAT_RUN_MIN = 8;

/** Formats an instant for messages: ISO 8601 (UTC) for UTC milliseconds, the number itself otherwise. O(1). Source: ISO 8601-1:2019. */
export function formatInstant(t: number, kind: TimeKind): string {
  if (kind === 'numeric') return String(t);
  const d = new Date(t);
  return Number.isNaN(d.getTime()) ? String(t) : d.toISOString();
}

/**
 * Sampling interval: the median of the positive differences between consecutive sorted times.
 * Cost O(n log n). Common practice (robust to a few missing or doubled observations).
 */
function inferInterval(sortedTime: Float64Array): number {
  const n = sortedTime.length;
  const first = sortedTime[1] - sortedTime[0];
  let regular = first > 0;
  for (let i = 2; i < n && regular; i++) regular = sortedTime[i] - sortedTime[i - 1] === first;
  if (regular) return first;
  const d = new Float64Array(n - 1);
  let m = 0;
  for (let i = 1; i < n; i++) {
    const dt = sortedTime[i] - sortedTime[i - 1];
    if (dt > 0) d[m++] = dt;
  }
  if (m === 0) throw new AnalysisInputError('all observations share one time; a sampling interval cannot be found');
  const sorted = d.subarray(0, m).sort();
  const mid = m >> 1;
  return m % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
}

const MAX_GRID_POINTS = 50_000_000;

/**
 * Averages observations into bins of the sampling interval Δ; a bin left empty is NaN (missing), and
 * non-finite values count as missing. Bins are found step by step, k_i = k_{i−1} + round((t_i − T)/Δ) with
 * T the first time in bin k_{i−1}, so slowly varying spacing (calendar months of 28–31 days) does not
 * drift off a fixed grid. A bin's time is its first observation's; an empty bin's is interpolated.
 * Times must be sorted; an exactly regular record is returned as it is (not copied). Cost O(n). Common practice (block averaging onto a regular grid).
 */
function binToGrid(time: Float64Array, value: Float64Array, interval: number): { time: Float64Array; value: Float64Array; binnedBins: number } {
  const n = time.length;
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(time[i])) throw new AnalysisInputError(`time at observation ${i + 1} is not a finite number`, { index: i });
  }
  let exact = true;
  for (let i = 1; i < n && exact; i++) exact = time[i] - time[i - 1] === interval;
  if (exact) return { time, value, binnedBins: 0 };
  const bin = new Float64Array(n);
  let ref = time[0];
  for (let i = 1; i < n; i++) {
    const step = Math.round((time[i] - ref) / interval);
    bin[i] = bin[i - 1] + step;
    if (step > 0) ref = time[i];
  }
  const bins = bin[n - 1] + 1;
  if (bins > MAX_GRID_POINTS) {
    throw new AnalysisInputError(`the record spans ${bins} sampling intervals of ${interval}; at most ${MAX_GRID_POINTS} are supported`);
  }
  const sum = new Float64Array(bins);
  const cnt = new Uint32Array(bins);
  const grid = new Float64Array(bins).fill(Number.NaN);
  for (let i = 0; i < n; i++) {
    const k = bin[i];
    if (Number.isNaN(grid[k])) grid[k] = time[i];
    if (!Number.isFinite(value[i])) continue;
    sum[k] += value[i];
    cnt[k]++;
  }
  let binnedBins = 0;
  let last = 0;
  for (let k = 0; k < bins; k++) {
    if (cnt[k] > 1) binnedBins++;
    sum[k] = cnt[k] > 0 ? sum[k] / cnt[k] : Number.NaN;
    if (Number.isNaN(grid[k])) continue;
    for (let j = last + 1; j < k; j++) grid[j] = grid[last] + ((grid[k] - grid[last]) * (j - last)) / (k - last);
    last = k;
  }
  return { time: grid, value: sum, binnedBins };
}

/**
 * Fills interior runs of at most maxGap missing points by linear interpolation between the points
 * either side; missing points at the ends are left out. A longer run is an AnalysisInputError naming its
 * instants, or with policy 'latest-stretch' the analysis keeps only the points after the last such run
 * (`observed` marks the points that were not filled).
 * The result may share memory with the input when nothing needs filling. Cost O(n). Common practice (short-gap linear interpolation).
 */
function fillGaps(
  time: Float64Array,
  value: Float64Array,
  maxGap: number,
  policy: 'error' | 'latest-stretch',
  kind: TimeKind,
): {
  time: Float64Array;
  value: Float64Array;
  observed: Uint8Array;
  filledPoints: number;
  gaps: GapReport[];
  droppedBeforeStretch: number;
  trimmedEnds: number;
} {
  let a = 0;
  let b = value.length;
  while (a < b && Number.isNaN(value[a])) a++;
  while (b > a && Number.isNaN(value[b - 1])) b--;
  const trimmedEnds = value.length - (b - a);
  if (a === b) throw new AnalysisInputError('the series has no numeric values');
  const gaps: GapReport[] = [];
  let start = a;
  for (let i = a; i < b;) {
    if (!Number.isNaN(value[i])) {
      i++;
      continue;
    }
    let j = i;
    while (Number.isNaN(value[j])) j++;
    const points = j - i;
    const filled = points <= maxGap;
    gaps.push({ from: time[i], to: time[j - 1], points, filled });
    if (!filled) {
      if (policy === 'error') {
        throw new AnalysisInputError(
          `gap of ${points} missing points from ${formatInstant(time[i], kind)} to ${formatInstant(time[j - 1], kind)} is longer than maxGap = ${maxGap}`,
          { time: time[i] },
        );
      }
      start = j;
    }
    i = j;
  }
  const keptGaps = gaps.filter((g) => g.from >= time[start]);
  const t = time.subarray(start, b);
  const v = keptGaps.length > 0 ? value.slice(start, b) : value.subarray(start, b);
  const observed = new Uint8Array(v.length);
  for (let i = 0; i < v.length; i++) observed[i] = Number.isNaN(v[i]) ? 0 : 1;
  const filledPoints = fillLinear(v, observed);
  return { time: t, value: v, observed, filledPoints, gaps: keptGaps, droppedBeforeStretch: start - a, trimmedEnds };
}

/**
 * Replaces each run of unobserved points (observed[i] = 0) by the straight line between the observed points
 * either side, in place (a run at either end, with one neighbour only, is left alone). Returns the number replaced.
 * Used for the record and, with the record's mask, for every surrogate, so both are interpolated alike. O(n).
 * Common practice (linear interpolation).
 */
export function fillLinear(v: Float64Array, observed: Uint8Array): number {
  let filled = 0;
  for (let i = 0; i < v.length; i++) {
    if (observed[i]) continue;
    let j = i;
    while (j < v.length && !observed[j]) j++;
    // A run touching either end has no neighbour on that side; it is left as it is.
    if (i === 0 || j === v.length) {
      i = j;
      continue;
    }
    const left = v[i - 1];
    const right = v[j];
    for (let k = i; k < j; k++) v[k] = left + ((right - left) * (k - i + 1)) / (j - i + 1);
    filled += j - i;
    i = j;
  }
  return filled;
}

/** Natural logarithm of each value; a value ≤ 0 is an AnalysisInputError naming its instant. O(n). */
function logValues(time: Float64Array, value: Float64Array, kind: TimeKind): Float64Array {
  const out = new Float64Array(value.length);
  for (let i = 0; i < value.length; i++) {
    if (!(value[i] > 0)) {
      throw new AnalysisInputError(`log transform needs positive values; the value at ${formatInstant(time[i], kind)} is ${value[i]}`, { time: time[i] });
    }
    out[i] = Math.log(value[i]);
  }
  return out;
}

/**
 * Day-of-year group 0..365 of a UTC instant, the same calendar day in every year: 0 = 1 January, 58 = 28 February,
 * 59 = 29 February (leap years only), 60 = 1 March, …, 365 = 31 December. In a common year the days after
 * 28 February move up by one, so 1 March is always group 60 and never shares 29 February's. Leap years by the
 * Gregorian rule (divisible by 4, except centuries not divisible by 400). O(1). Source: ISO 8601-1:2019,
 * Sec. 4.2.2 (Gregorian calendar; ordinal dates).
 */
export function dayOfYearGroup(t: number): number {
  const d = new Date(t);
  const y = d.getUTCFullYear();
  // setUTCFullYear, not Date.UTC, which would read years 0–99 as 1900–1999.
  const ordinal = Math.floor((t - new Date(0).setUTCFullYear(y, 0, 1)) / 86_400_000);
  const leap = (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0;
  return !leap && ordinal >= 59 ? ordinal + 1 : ordinal;
}

/**
 * Removes a seasonal cycle: x_i − (mean of x over its season − mean of x), seasons being the UTC
 * calendar month (12) or the day-of-year group of dayOfYearGroup (366, 29 February its own). The overall level is kept,
 * so the cv denominator stays meaningful. Needs UTC-millisecond times. Cost O(n). Common practice
 * (climatology anomalies, e.g. Wilks (2011), Statistical Methods in the Atmospheric Sciences, 3rd ed., Sec. 3.4.2, from memory).
 */
export function removeSeasonal(time: Float64Array, value: Float64Array, mode: 'month' | 'day-of-year', kind: TimeKind): Float64Array {
  if (kind !== 'utc-ms') throw new AnalysisInputError('seasonal removal needs calendar timestamps (ISO 8601), not plain numeric times');
  const groups = mode === 'month' ? 12 : 366;
  const season = new Uint16Array(value.length);
  for (let i = 0; i < value.length; i++) season[i] = mode === 'month' ? new Date(time[i]).getUTCMonth() : dayOfYearGroup(time[i]);
  const sum = new Float64Array(groups);
  const cnt = new Float64Array(groups);
  let total = 0;
  for (let i = 0; i < value.length; i++) {
    sum[season[i]] += value[i];
    cnt[season[i]]++;
    total += value[i];
  }
  const mean = total / value.length;
  const out = new Float64Array(value.length);
  for (let i = 0; i < value.length; i++) out[i] = value[i] - (sum[season[i]] / cnt[season[i]] - mean);
  return out;
}

const SAMPLING_BLOCK = 16;
const SAMPLING_RATIO = 1.5;

function medianOf(a: Float64Array): number {
  const s = a.slice().sort();
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/**
 * Changes of the sampling interval in sorted times. The positive spacings are cut into blocks of 16 and each
 * block's median taken (robust to a few missing or doubled readings, as inferInterval); a block whose median
 * differs from the current interval by a factor of more than 1.5, confirmed by the next block (also that far from
 * the current interval and within the factor of the first), starts a new interval, so a change is seen once 32
 * readings on the new interval have arrived. Only regular blocks count (at least half their spacings within 10%
 * of the block median): irregularly timed records have no interval to change. The change is placed at the spacing that best splits the two
 * blocks around it (fewest spacings on the wrong side of the geometric mean of the two intervals); `index` is the
 * first observation on the new interval. Irregular calendar spacing (months of 28–31 days) stays within the
 * factor. Cost O(n). Common practice (block medians of the sampling interval; the factor 1.5 is our choice,
 * between calendar irregularity and the halving/doubling of a changed logger setting).
 */
export function detectSamplingChanges(sortedTime: Float64Array): { index: number; time: number; before: number; after: number }[] {
  const n = sortedTime.length;
  let exact = true;
  for (let j = 2; j < n && exact; j++) exact = sortedTime[j] - sortedTime[j - 1] === sortedTime[1] - sortedTime[0];
  if (exact) return [];
  const pos: number[] = [];
  const sp: number[] = [];
  for (let j = 0; j + 1 < n; j++) {
    const d = sortedTime[j + 1] - sortedTime[j];
    if (d > 0) {
      pos.push(j);
      sp.push(d);
    }
  }
  const blocks = Math.floor(sp.length / SAMPLING_BLOCK);
  if (blocks < 2) return [];
  const spacing = Float64Array.from(sp);
  const med = Float64Array.from({ length: blocks }, (_, b) =>
    medianOf(spacing.subarray(b * SAMPLING_BLOCK, b === blocks - 1 ? sp.length : (b + 1) * SAMPLING_BLOCK)),
  );
  // A block is regular when at least half its spacings are within 10% of its median (a logger, possibly with
  // missing readings); irregular sampling (manual or event-driven) has no interval to change and is left alone.
  const regular = Uint8Array.from({ length: blocks }, (_, b) => {
    const to = b === blocks - 1 ? sp.length : (b + 1) * SAMPLING_BLOCK;
    let near = 0;
    for (let j = b * SAMPLING_BLOCK; j < to; j++) if (Math.abs(sp[j] - med[b]) <= 0.1 * med[b]) near++;
    return 2 * near >= to - b * SAMPLING_BLOCK ? 1 : 0;
  });
  const differ = (a: number, b: number) => a / b > SAMPLING_RATIO || b / a > SAMPLING_RATIO;
  const out: { index: number; time: number; before: number; after: number }[] = [];
  let ref = Number.NaN;
  let lastSplit = 0;
  for (let b = 0; b < blocks; b++) {
    if (!regular[b]) continue;
    if (Number.isNaN(ref)) ref = med[b];
    if (!differ(med[b], ref)) continue;
    // Confirmed only by a second block on the new interval, so one unusual block (a burst of missing or doubled
    // readings, or chance in irregular sampling) does not count.
    if (b + 1 >= blocks || !regular[b + 1] || !differ(med[b + 1], ref) || differ(med[b + 1], med[b])) continue;
    const lo = Math.max(lastSplit, (b - 1) * SAMPLING_BLOCK);
    const hi = b === blocks - 1 ? sp.length : (b + 1) * SAMPLING_BLOCK;
    const cut = Math.sqrt(ref * med[b]);
    const isNew = (d: number) => (med[b] > ref ? d > cut : d < cut);
    // misfits(s) = #{new-looking before s} + #{old-looking from s on}; scan s = lo..hi.
    let misfit = 0;
    for (let j = lo; j < hi; j++) if (!isNew(sp[j])) misfit++;
    let best = misfit,
      split = lo;
    for (let s = lo + 1; s <= hi; s++) {
      misfit += isNew(sp[s - 1]) ? 1 : -1;
      if (misfit < best) {
        best = misfit;
        split = s;
      }
    }
    if (split >= sp.length) continue;
    out.push({ index: pos[split], time: sortedTime[pos[split]], before: ref, after: med[b] });
    ref = med[b];
    lastSplit = split;
  }
  return out;
}

/**
 * Puts observations on the regular grid t_k = anchor + kΔ by taking, for each k, the one finite observation
 * nearest to t_k (ties: the earlier), never an average: averaging the finer readings would itself lower their
 * variance and so change the indicators. A grid instant with no observation within Δ/2 is missing. O(n).
 * Common practice (decimation to a coarser grid).
 */
function subsampleToGrid(time: Float64Array, value: Float64Array, interval: number, anchor: number): { time: Float64Array; value: Float64Array } {
  const n = time.length;
  const k0 = Math.round((time[0] - anchor) / interval);
  const bins = Math.round((time[n - 1] - anchor) / interval) - k0 + 1;
  if (bins > MAX_GRID_POINTS)
    throw new AnalysisInputError(`the record spans ${bins} sampling intervals of ${interval}; at most ${MAX_GRID_POINTS} are supported`);
  const grid = Float64Array.from({ length: bins }, (_, k) => anchor + (k0 + k) * interval);
  const out = new Float64Array(bins).fill(Number.NaN);
  const dist = new Float64Array(bins).fill(Infinity);
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(value[i])) continue;
    const k = Math.round((time[i] - anchor) / interval) - k0;
    const d = Math.abs(time[i] - grid[k]);
    if (d < dist[k]) {
      dist[k] = d;
      out[k] = value[i];
    }
  }
  return { time: grid, value: out };
}

/**
 * Runs of at least FLAT_RUN_MIN identical consecutive values, as index ranges [start, end). Found by comparing
 * neighbours, not from sliding sums (which leave rounding residue instead of an exact zero). O(n). Common
 * practice (QARTOD flat-line test, U.S. IOOS (2020), Manual for Real-Time Quality Control of In-situ Temperature
 * and Salinity Data, v2.1, from memory).
 */
function findFlatRuns(value: Float64Array): { start: number; end: number }[] {
  const out: { start: number; end: number }[] = [];
  for (let i = 0; i < value.length;) {
    let j = i + 1;
    while (j < value.length && value[j] === value[i]) j++;
    if (j - i >= FLAT_RUN_MIN) out.push({ start: i, end: j });
    i = j;
  }
  return out;
}

/**
 * Points of a gridded record of `gridPoints` points that a trailing analysis span keeps: round(extent in points)
 * (extentPoints: a fraction of the gridded record, "<n> points" or an ISO 8601 duration over the interval), at
 * least 1 and at most the record; the whole record when there is no span. Shared with the backtest replay, which
 * must cut the same span. O(1).
 */
export function spanPoints(span: Extent | null | undefined, gridPoints: number, interval: number, kind: TimeKind): number {
  if (span === null || span === undefined) return gridPoints;
  return Math.min(gridPoints, Math.max(1, Math.round(extentPoints(span, gridPoints, interval, kind))));
}

/** The prepared record: the regular grid, which points were really observed, and what was found on the way. */
export interface PreparedSeries {
  time: Float64Array;
  value: Float64Array;
  /** 1 where the grid point holds an observation, 0 where it was interpolated */
  observed: Uint8Array;
  /** flat runs as grid index ranges [start, end) (quality.flatRuns gives their instants) */
  flat: { start: number; end: number }[];
  interval: number;
  startsAfter: PreparedStart;
  quality: PreparationQuality;
}

export interface PreparationOptions {
  maxGap: number;
  gapPolicy: 'error' | 'latest-stretch';
  /** trailing span of the gridded record to keep (extent; a fraction is of the gridded record); null or absent = all */
  span?: Extent | null;
  logTransform: boolean;
  seasonal: 'none' | 'month' | 'day-of-year';
  /** default 'start-after' */
  samplingChange?: SamplingHandling;
}

/**
 * Preparation pipeline: sort by time; find sampling-interval changes and either keep only the observations
 * after the last one ('start-after') or subsample onto the coarsest interval ('subsample'); bin onto the grid;
 * keep the trailing span; fill short gaps (or keep the latest gap-free stretch), remembering which points were
 * observed; find flat runs; then log transform and seasonal removal. Cost O(n) (O(n log n) when times are unsorted).
 */
export function prepareSeries(
  input: { time: Float64Array; value: Float64Array; intervalMs?: number; timeKind?: TimeKind },
  opts: PreparationOptions,
): PreparedSeries {
  const kind = input.timeKind ?? 'utc-ms';
  if (input.time.length !== input.value.length) {
    throw new AnalysisInputError(`time has ${input.time.length} entries but value has ${input.value.length}`);
  }
  if (input.time.length < 2) throw new AnalysisInputError(`the series has ${input.time.length} observation(s); at least 8 are needed`);
  let time = input.time;
  let value = input.value;
  for (let i = 1; i < time.length; i++) {
    if (time[i] < time[i - 1]) {
      const order = Array.from({ length: time.length }, (_, k) => k).sort((p, q) => input.time[p] - input.time[q]);
      time = Float64Array.from(order, (k) => input.time[k]);
      value = Float64Array.from(order, (k) => input.value[k]);
      break;
    }
  }
  let startsAfter: PreparedStart = 'record-start';
  const changes = detectSamplingChanges(time);
  let droppedBeforeSampling = 0;
  let interval: number;
  let g: { time: Float64Array; value: Float64Array; binnedBins: number };
  const handling = opts.samplingChange ?? 'start-after';
  if (changes.length > 0 && handling === 'subsample') {
    interval = Math.max(changes[0].before, ...changes.map((c) => c.after));
    const coarsest = changes.find((c) => c.after === interval);
    g = { ...subsampleToGrid(time, value, interval, coarsest ? coarsest.time : time[0]), binnedBins: 0 };
  } else {
    if (changes.length > 0) {
      droppedBeforeSampling = changes[changes.length - 1].index;
      time = time.subarray(droppedBeforeSampling);
      value = value.subarray(droppedBeforeSampling);
      startsAfter = 'sampling';
    }
    interval = changes.length === 0 && input.intervalMs !== undefined ? input.intervalMs : inferInterval(time);
    if (!(interval > 0)) throw new AnalysisInputError(`sampling interval must be positive (got ${interval})`);
    g = binToGrid(time, value, interval);
  }
  time = g.time;
  value = g.value;
  const binnedBins = g.binnedBins;
  let droppedBeforeSpan = 0;
  if (opts.span !== null && opts.span !== undefined) {
    const keep = spanPoints(opts.span, time.length, interval, kind);
    if (keep < time.length) {
      droppedBeforeSpan = time.length - keep;
      time = time.subarray(droppedBeforeSpan);
      value = value.subarray(droppedBeforeSpan);
      startsAfter = 'span';
    }
  }
  const filled = fillGaps(time, value, opts.maxGap, opts.gapPolicy, kind);
  if (filled.droppedBeforeStretch > 0) startsAfter = 'gap';
  const observed = filled.observed;
  let v = filled.value;
  const flat = findFlatRuns(v);
  if (opts.logTransform) v = logValues(filled.time, v, kind);
  if (opts.seasonal !== 'none') v = removeSeasonal(filled.time, v, opts.seasonal, kind);
  // The result must not alias the caller's arrays (a later write to the input would change it).
  const own = (a: Float64Array, from: Float64Array) => (a.buffer === from.buffer ? a.slice() : a);
  const t = own(filled.time, input.time);
  return {
    time: t,
    value: own(v, input.value),
    observed,
    flat,
    interval,
    startsAfter,
    quality: {
      observations: input.time.length,
      binnedBins,
      filledPoints: filled.filledPoints,
      gaps: filled.gaps,
      droppedBeforeStretch: filled.droppedBeforeStretch,
      trimmedEnds: filled.trimmedEnds,
      droppedBeforeSpan,
      flatRuns: flat.map((r) => ({ from: t[r.start], to: t[r.end - 1], points: r.end - r.start })),
      samplingChanges: changes.map(({ time: at, before, after }) => ({ time: at, before, after })),
      samplingHandling: changes.length > 0 ? handling : null,
      droppedBeforeSampling,
    },
  };
}
