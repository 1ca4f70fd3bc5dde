import { createHash } from 'node:crypto';
import {
  analyseFrame,
  analysisFrame,
  assembleResult,
  kendallEntry,
  significanceEntry,
  type AnalysisFrame,
  type AnalysisInput,
  type AnalysisResult,
  type StretchStart,
} from './analyze';
import { detrend, GAUSS_REACH, residualAbout } from './detrend';
import { indicatorArrays } from './indicator-arrays';
import { indicatorDefinition } from './indicators';
import { kendallCounts, reusedTrends } from './kendall';
import { rollingIndicators, type IndicatorCompanions } from './rolling';
import type { AnalysisSettings, IndicatorName, SurrogateMethod } from './settings';
import { ENGINE_VERSION } from './version';

/** The layout of AnalysisState; a state of another layout is not continued (a full recomputation replaces it). */
export const STATE_FORMAT = 2 as const;

/**
 * What an analysis keeps so that the next one, on the same record with points appended, can update instead of
 * recomputing: the facts the update must find unchanged (engine version, settings, stretch start, interval,
 * shifts, window, bandwidth, a digest of the analysed values already seen) and what it continues from. Only what
 * cannot be rebuilt exactly and cheaply from the record is kept: the trend (the residuals are x − trend, the moment
 * indicators a sliding pass over them, both O(n) and the same doubles), the per-window indicators (O(w) or more per
 * window), the last values of each indicator that a new point can change (what Kendall's S drops), the S and the
 * surrogate taus. Memory O(n + n · per-window indicators + R · indicators + N · indicators) for N surrogates and
 * the detrending reach R (about 0.14 MB for 10,000 points and the seven default indicators; DEVELOPERS.md).
 */
export interface AnalysisState {
  format: typeof STATE_FORMAT;
  engineVersion: string;
  /** the settings as JSON (key order as parsed) */
  settingsKey: string;
  interval: number;
  stretchFrom: number;
  startsAfter: StretchStart;
  /** the detected shifts as JSON */
  shiftsKey: string;
  w: number;
  /** the smoother's h in points (null for the other detrendings) */
  h: number | null;
  /** points of the analysed stretch (before differencing) the digest covers */
  xLength: number;
  /** windows (by start) whose skip flags the digest covers: those ending before the first residual a new point can change */
  skipCovered: number;
  /** SHA-256 of the stretch's values, its observed mask and those skip flags */
  prefixDigest: string;
  /** residual points analysed */
  n: number;
  /** the trend at each residual position (detrend's; `residualAbout` gives the residuals back) */
  trend: Float64Array;
  /** per-window indicators (kind 'window') at each residual position, and their companions */
  windowIndicators: Record<string, Float64Array>;
  companions: Record<string, Record<string, Float64Array>>;
  /** each indicator's values at the last R residual positions (R = detrendReach), the ones an update recomputes */
  tails: Record<string, Float64Array>;
  /**
   * Kendall's S (concordant − discordant pairs) of each indicator's finite values in time order; null for one whose
   * τ an update took from the indicator it is a monotone transform of (reusedTrends), so its own S was not counted
   */
  kendallS: Record<string, number | null>;
  /** the surrogate taus kept, with the record they were drawn on and each indicator's τ then */
  surrogates: {
    method: SurrogateMethod;
    count: number;
    taus: Record<string, Float64Array>;
    drawn: { n: number; to: number };
    tauAtDraw: Record<string, number | null>;
  } | null;
}

/** How an analysis was made, for the snapshot's provenance. */
export interface UpdateMode {
  mode: 'full' | 'incremental';
  /** why: what forced the full recomputation, or what the update kept */
  reason: string;
  /** residual points of the analysis the update continued from (incremental only) */
  previousN?: number;
}

/** The rule for surrogates of an updated record (DEVELOPERS.md, "Incremental analysis and parallel analysis"). */
export interface NullRefresh {
  /** redraw (full recomputation) once this many points were added since the surrogates were drawn */
  points: number;
  /** …or once any indicator's τ has moved by more than this many null standard deviations since then */
  tauShift: number;
}

/** Defaults of NullRefresh: a redraw every 100 new points, or when τ moves by a quarter of the null's spread. */
export const NULL_REFRESH: NullRefresh = { points: 100, tauShift: 0.25 };

/**
 * Why settings never allow an incremental update (null when they may): each named setting makes a new point change
 * every residual, or the window, or the stretch's start. Then no state is kept. O(1).
 */
export function incrementalBlocker(settings: AnalysisSettings): string | null {
  if (settings.sensitivity) return 'the sensitivity grid re-runs the analysis over the whole stretch at other windows and bandwidths';
  if (settings.detrend === 'linear') return 'linear detrending fits one line to the whole stretch, so every residual changes with a new point';
  if ((settings.detrend === 'gaussian' || settings.detrend === 'local-linear') && typeof settings.bandwidth === 'number')
    return 'the bandwidth is a fraction of the stretch, so the smoother, and every residual, changes as the stretch grows';
  if (typeof settings.window === 'number') return 'the window is a fraction of the stretch, so its length changes as the stretch grows';
  if (settings.span !== null) return 'a span moves the start of the stretch with every new point';
  if (settings.seasonal !== 'none') return 'seasonal means are taken over the whole record';
  return null;
}

/**
 * How many residuals before the end a new point can change: 0 without detrending or with differencing; (m − 1)/2
 * for a centred moving average of width m; ⌈8.86 h⌉ for the Gaussian and local-linear smoothers, whose kernels the
 * engine cuts there (weights below 1e-17: lib/engine/detrend.ts, GAUSS_REACH), so a residual further back is the
 * same function of the same values, equal to rounding. O(1).
 */
function detrendReach(settings: AnalysisSettings, h: number): number {
  if (settings.detrend === 'moving-average') return (settings.movingAverageWidth - 1) / 2;
  if (settings.detrend === 'gaussian' || settings.detrend === 'local-linear') return Math.ceil(GAUSS_REACH * h);
  return 0;
}

function digestOf(frame: AnalysisFrame, xLength: number, skipCovered: number): string {
  const bytes = (a: Float64Array | Uint8Array, length: number) => new Uint8Array(a.buffer, a.byteOffset, length * a.BYTES_PER_ELEMENT);
  return createHash('sha256')
    .update(bytes(frame.x, xLength))
    .update(bytes(frame.observedStretch, xLength))
    .update(bytes(frame.skip, skipCovered))
    .digest('hex');
}

/** Windows (by start) whose indicator values a later update keeps: those ending before residual n − reach. */
function keptWindows(n: number, reach: number, w: number): number {
  return Math.max(0, n - reach - w + 1);
}

function toTyped(values: (number | null)[]): Float64Array {
  return Float64Array.from(values, (v) => (v === null ? Number.NaN : v));
}

function finiteValues(values: Float64Array): Float64Array {
  let m = 0;
  for (const v of values) if (Number.isFinite(v)) m++;
  const out = new Float64Array(m);
  let k = 0;
  for (const v of values) if (Number.isFinite(v)) out[k++] = v;
  return out;
}

/** The state of a full result, or null when its settings (or per-window strides) rule updates out. O(n log n) per indicator (Kendall's S). */
function stateOf(frame: AnalysisFrame, settings: AnalysisSettings, result: AnalysisResult): AnalysisState | null {
  if (incrementalBlocker(settings) !== null) return null;
  if (frame.stride > 1 && settings.indicators.some((name) => indicatorDefinition(name)!.kind === 'window')) return null;
  const indicators = indicatorArrays(result) as Record<string, Float64Array>;
  const companions: AnalysisState['companions'] = {};
  for (const [name, byName] of Object.entries(result.companions)) {
    companions[name] = Object.fromEntries(Object.entries(byName!).map(([k, a]) => [k, toTyped(a)]));
  }
  const kendallS: Record<string, number | null> = {};
  for (const name of settings.indicators) kendallS[name] = kendallCounts(null, finiteValues(indicators[name]!)).s;
  const reach = detrendReach(settings, frame.h);
  const skipCovered = keptWindows(frame.n, reach, frame.w);
  return {
    ...frameFacts(frame, settings),
    skipCovered,
    prefixDigest: digestOf(frame, frame.x.length, skipCovered),
    trend: result.series.trend,
    ...keptIndicators(settings, indicators, frame.n - reach),
    companions,
    kendallS,
    surrogates:
      settings.surrogates > 0
        ? {
            method: settings.surrogateMethod,
            count: settings.surrogates,
            taus: Object.fromEntries(settings.indicators.map((name) => [name, Float64Array.from(result.significance[name]!.taus)])),
            drawn: { n: frame.n, to: frame.time[frame.time.length - 1] },
            tauAtDraw: Object.fromEntries(settings.indicators.map((name) => [name, result.kendall[name]!.tau])),
          }
        : null,
  };
}

/** The indicator arrays a state keeps: the per-window indicators whole, every indicator's values from `tailFrom` on. O(n). */
function keptIndicators(settings: AnalysisSettings, values: Record<string, Float64Array>, tailFrom: number) {
  const windowNames = settings.indicators.filter((name) => indicatorDefinition(name)!.kind === 'window');
  return {
    windowIndicators: Object.fromEntries(windowNames.map((name) => [name, values[name]])),
    tails: Object.fromEntries(settings.indicators.map((name) => [name, values[name].slice(Math.max(0, tailFrom))])),
  };
}

function frameFacts(frame: AnalysisFrame, settings: AnalysisSettings) {
  return {
    format: STATE_FORMAT,
    engineVersion: ENGINE_VERSION,
    settingsKey: JSON.stringify(settings),
    interval: frame.prepared.interval,
    stretchFrom: frame.time[0],
    startsAfter: frame.cut.startsAfter,
    shiftsKey: JSON.stringify(frame.shifts),
    w: frame.w,
    h: settings.detrend === 'gaussian' || settings.detrend === 'local-linear' ? frame.h : null,
    xLength: frame.x.length,
    n: frame.n,
  };
}

/** First index of sorted[] with sorted[i] ≥ y (strict: > y). O(log m). */
function bound(sorted: Float64Array, y: number, strict: boolean): number {
  let lo = 0,
    hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (sorted[mid] < y || (strict && sorted[mid] === y)) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

/** Σ over the tail's values y of #{prefix < y} − #{prefix > y}: the pairs (prefix, tail) of Kendall's S. O(k log m). */
function crossS(sortedPrefix: Float64Array, tail: Float64Array): number {
  let s = 0;
  for (const y of tail) s += bound(sortedPrefix, y, false) - (sortedPrefix.length - bound(sortedPrefix, y, true));
  return s;
}

/**
 * Kendall's τ_b, S and Var(S) of an indicator series whose values after `prefix` changed from `oldTail` to `newTail`,
 * from the S of the old series: S = S(prefix) + S(prefix, tail) + S(tail), so S_new = S_old − [S(prefix, old tail) +
 * S(old tail)] + [S(prefix, new tail) + S(new tail)], the cross terms by binary search in the sorted prefix and the tails' own by
 * kendallCounts; the tie sums n2 = Σ t(t−1)/2 and v1 = Σ t(t−1)(2t+5) from the merged sorted values. Then exactly as
 * kendallTau(null, values) (no ties in time): τ_b = S/√(n0(n0 − n2)), Var(S) = [m(m−1)(2m+5) − v1]/18.
 * Cost O(m log m) (one native sort of the prefix) + O(k log m) for tails of k values. Sources: Kendall (1945),
 * Biometrika 33, 239–251; the sums as in lib/engine/kendall.ts (Knight 1966).
 */
function continuedKendall(
  prefixValues: Float64Array,
  oldTailValues: Float64Array,
  oldS: number,
  newTailValues: Float64Array,
): { tau: number; s: number; varS: number } {
  const prefix = finiteValues(prefixValues).sort();
  const oldTail = finiteValues(oldTailValues);
  const newTail = finiteValues(newTailValues);
  const s = oldS - crossS(prefix, oldTail) - kendallCounts(null, oldTail).s + crossS(prefix, newTail) + kendallCounts(null, newTail).s;
  const tail = newTail.slice().sort();
  const m = prefix.length + tail.length;
  let n2 = 0,
    v1 = 0,
    i = 0,
    j = 0,
    run = 0,
    previous = Number.NaN;
  const close = () => {
    n2 += (run * (run - 1)) / 2;
    v1 += run * (run - 1) * (2 * run + 5);
  };
  while (i < prefix.length || j < tail.length) {
    const y = j >= tail.length || (i < prefix.length && prefix[i] <= tail[j]) ? prefix[i++] : tail[j++];
    if (y === previous) run++;
    else {
      close();
      run = 1;
      previous = y;
    }
  }
  close();
  if (m < 3) return { tau: Number.NaN, s, varS: Number.NaN };
  const n0 = (m * (m - 1)) / 2;
  const denom = Math.sqrt(n0 * (n0 - n2));
  return { tau: denom > 0 ? Math.max(-1, Math.min(1, s / denom)) : Number.NaN, s, varS: (m * (m - 1) * (2 * m + 5) - v1) / 18 };
}

function sampleSd(values: Float64Array): number {
  if (values.length < 2) return Number.NaN;
  let mean = 0;
  for (const v of values) mean += v;
  mean /= values.length;
  let ss = 0;
  for (const v of values) ss += (v - mean) * (v - mean);
  return Math.sqrt(ss / (values.length - 1));
}

/**
 * Why the frame of this record does not continue the state's (null when it does): the engine, the settings, the
 * stretch's start, the interval, the shifts, the window or bandwidth changed, no point was added, a value already
 * analysed was changed (replaced data, a quality flag, an interpolation after a closed gap), or the per-window
 * indicators are evaluated at windows that move with every point. O(n) (the digest).
 */
function continuationBlocker(frame: AnalysisFrame, settings: AnalysisSettings, previous: AnalysisState): string | null {
  const facts = frameFacts(frame, settings);
  if (previous.format !== facts.format) return 'the kept state is of an earlier layout';
  if (previous.engineVersion !== facts.engineVersion) return `the engine changed (${previous.engineVersion} → ${facts.engineVersion})`;
  if (previous.settingsKey !== facts.settingsKey) return 'the settings changed';
  if (previous.stretchFrom !== facts.stretchFrom || previous.startsAfter !== facts.startsAfter || previous.interval !== facts.interval)
    return 'the analysed stretch starts elsewhere or the sampling interval changed (a mark, a detected shift, a long gap or a change of sampling)';
  if (previous.shiftsKey !== facts.shiftsKey) return 'the detected abrupt shifts changed';
  if (previous.w !== facts.w || previous.h !== facts.h) return 'the window or bandwidth in points changed';
  if (frame.x.length <= previous.xLength) return 'no point was added after the last analysed one';
  if (frame.stride > 1 && settings.indicators.some((name) => indicatorDefinition(name)!.kind === 'window'))
    return 'per-window indicators are evaluated at evenly spaced windows that move with every new point (maxEvaluatedWindows)';
  const reach = detrendReach(settings, frame.h);
  if (previous.n - reach < 1 || previous.xLength - 1 < reach) return 'the stretch analysed before was shorter than the detrending reach';
  if (digestOf(frame, previous.xLength, previous.skipCovered) !== previous.prefixDigest)
    return 'values already analysed changed (replaced data, quality flags, or interpolation of a closed gap)';
  return null;
}

/**
 * Analyses a record, continuing from the state of the previous analysis of the same record when that is exact, and
 * returns the result, the state for the next time and how it was made.
 *
 * The update (mode 'incremental'), for a record with k new points on n_prev residuals and the detrending reach R
 * (detrendReach): the record is prepared in full (O(n)) so the digest of the values already analysed, the
 * stretch's start and the shifts can be checked; residuals from c = n_prev − R on are recomputed by detrending the
 * points from c − R on (O((2R + k) log)); the indicators of the windows ending at c or later are recomputed
 * (O(R + k + w)); each indicator's Kendall S drops the values of those windows from the end and appends the new ones
 * (continuedKendall: one sort of the kept values, O(log m) per changed value).
 * τ, its p and every indicator value equal a full recomputation to rounding (tests/engine/update.test.ts: 1e-9).
 *
 * Surrogates cannot be updated: every surrogate is drawn for the whole record. The update keeps the surrogate taus
 * drawn by the last full analysis and reads the current τ against them (its p says so through `drawn`); a full
 * recomputation redraws them once `refresh.points` points were added since, or once an indicator's τ moved by more
 * than `refresh.tauShift` standard deviations of its surrogate taus. Everything else that could change a number
 * already computed forces a full recomputation (continuationBlocker, incrementalBlocker), its reason returned.
 */
export async function updateAnalysis(
  input: AnalysisInput,
  settings: AnalysisSettings,
  previous: AnalysisState | null,
  options: { parallel?: boolean; refresh?: NullRefresh; incremental?: boolean } = {},
): Promise<{ result: AnalysisResult; state: AnalysisState | null; how: UpdateMode }> {
  const frame = analysisFrame(input, settings);
  const full = async (reason: string) => {
    const result = await analyseFrame(frame, settings, { parallel: options.parallel });
    // Switched off, nothing is kept: a state would only cost storage.
    return { result, state: options.incremental === false ? null : stateOf(frame, settings, result), how: { mode: 'full' as const, reason } };
  };
  const blocker = incrementalBlocker(settings);
  if (blocker) return full(blocker);
  if (options.incremental === false) return full('incremental analysis is switched off');
  if (!previous) return full('no earlier analysis kept what an update needs');
  const stop = continuationBlocker(frame, settings, previous);
  if (stop) return full(stop);

  const { x, n, w, dt, raw, skip } = frame;
  const names = settings.indicators;
  const nPrev = previous.n;
  const reach = detrendReach(settings, frame.h);
  const c = nPrev - reach;
  const from = Math.max(0, c - reach);
  const segment = detrend(x.subarray(from), settings.detrend, { bandwidthPoints: frame.h, movingAverageWidth: settings.movingAverageWidth });
  const splice = (kept: Float64Array, tail: Float64Array, tailFrom: number) => {
    const out = new Float64Array(n);
    out.set(kept.subarray(0, c));
    out.set(tail.subarray(c - tailFrom), c);
    return out;
  };
  const trend = splice(previous.trend, segment.trend, from);
  // x − trend at every position: the kept residuals before c (x there is unchanged, by the digest), the segment's after.
  const residual = residualAbout(x, trend, settings.detrend);

  // Moment indicators in one sliding pass over the residuals, O(n): each window's value depends only on the residuals
  // from its block boundary (windowMoments re-anchors every ⌈w/4⌉ windows) to its end, which before c are the ones it
  // was computed from, so this gives the kept values exactly and the ones a new point reaches afresh.
  const momentNames = names.filter((name) => indicatorDefinition(name)!.kind === 'moments');
  const windowNames = names.filter((name) => indicatorDefinition(name)!.kind === 'window');
  const values: Partial<Record<IndicatorName, Float64Array>> = rollingIndicators(residual, w, momentNames, { raw, dt, skip, stride: 1 });
  // Per-window indicators cost O(w) or more per window: only the windows ending at c or later, from a block boundary.
  const block = Math.max(1, Math.ceil(w / 4));
  const start = Math.floor(Math.max(0, c - w + 1) / block) * block;
  const tailCompanions: IndicatorCompanions = {};
  const tail = rollingIndicators(residual.subarray(start), w, windowNames, {
    raw: raw.subarray(start),
    dt,
    skip: skip.subarray(start),
    stride: 1,
    companions: tailCompanions,
  });
  const companions: IndicatorCompanions = {};
  for (const name of windowNames) {
    values[name] = splice(previous.windowIndicators[name], tail[name], start);
    const extra = tailCompanions[name];
    if (extra) companions[name] = Object.fromEntries(Object.entries(extra).map(([k, a]) => [k, splice(previous.companions[name][k], a, start)]));
  }
  // An indicator whose τ is its base's (sd of variance, recovery of ac1) needs no count of its own now; a later update
  // that cannot reuse it counts its S afresh (continuedKendall from an empty prefix), the same integer.
  const reused = reusedTrends(values);
  const none = new Float64Array(0);
  const kendallS: Record<string, number | null> = {};
  const tallies: Record<string, ReturnType<typeof continuedKendall>> = {};
  for (const name of names) {
    const now = values[name]!;
    const oldS = previous.kendallS[name];
    if (reused.has(name)) kendallS[name] = null;
    else if (oldS === null) kendallS[name] = (tallies[name] = continuedKendall(none, none, 0, now)).s;
    else kendallS[name] = (tallies[name] = continuedKendall(now.subarray(0, c), previous.tails[name], oldS, now.subarray(c))).s;
  }
  const kendall: AnalysisResult['kendall'] = {};
  for (const name of names) {
    const via = reused.get(name);
    const t = via ? tallies[via.base] : tallies[name];
    kendall[name] = kendallEntry(name, via && via.sign === -1 ? { ...t, tau: -t.tau, s: -t.s } : t);
  }

  const significance: AnalysisResult['significance'] = {};
  const kept = previous.surrogates;
  let nullWords = '';
  if (settings.surrogates > 0) {
    if (!kept) return full('no surrogate taus were kept');
    const since = n - kept.drawn.n;
    const refresh = options.refresh ?? NULL_REFRESH;
    if (since >= refresh.points) return full(`surrogates redrawn: ${since} points were added since they were drawn (redrawn every ${refresh.points})`);
    for (const name of names) {
      const now = kendall[name]!.tau;
      const then = kept.tauAtDraw[name];
      const spread = sampleSd(kept.taus[name]);
      if ((now === null) !== (then === null))
        return full(`surrogates redrawn: the τ of ${name} became ${now === null ? 'undefined' : 'defined'} since they were drawn`);
      if (now !== null && then !== null && Number.isFinite(spread) && Math.abs(now - then) > refresh.tauShift * spread)
        return full(`surrogates redrawn: the τ of ${name} moved by more than ${refresh.tauShift} of the surrogates' spread since they were drawn`);
    }
    for (const name of names) significance[name] = significanceEntry(name, kendall[name]!.tau, Array.from(kept.taus[name]), kept.method, kept.drawn);
    nullWords = `; surrogate taus kept from the record of ${kept.drawn.n} points (${since} points before this one)`;
  }

  const result = assembleResult(frame, settings, { trend, residual, values, companions, kendall, significance, sensitivity: null });
  const skipCovered = keptWindows(n, reach, w);
  const state: AnalysisState = {
    ...frameFacts(frame, settings),
    skipCovered,
    prefixDigest: digestOf(frame, x.length, skipCovered),
    trend,
    ...keptIndicators(settings, values as Record<string, Float64Array>, n - reach),
    companions,
    kendallS,
    surrogates: kept,
  };
  return {
    result,
    state,
    how: {
      mode: 'incremental',
      reason: `${n - nPrev} new point${n - nPrev === 1 ? '' : 's'}: the last ${n - c} residuals, their windows and τ recomputed from the ${nPrev} kept${nullWords}`,
      previousN: nPrev,
    },
  };
}
