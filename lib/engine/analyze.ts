import { detrend } from './detrend';
import { INDICATOR_DIRECTIONS, normalPInDirection, type TrendDirection } from './direction';
import { AnalysisInputError } from './errors';
import { indicatorTrends } from './kendall';
import { unjudgedWindows } from './coverage';
import { extentPoints } from './extent';
import { formatInstant, prepareSeries, type PreparationQuality } from './prepare';
import type { TimeKind } from './time-kind';
import { detectShifts } from './shifts';
import { indicatorDefinition } from './indicators';
import { lazyIndicators, toNullable, typedIndicators } from './indicator-arrays';
import { evaluationStride, MIN_WINDOW_POINTS, rollingIndicators, windowPoints, type IndicatorCompanions } from './rolling';
import { sensitivityGrid, type SensitivityResult } from './sensitivity';
import { computeSurrogateTaus } from './surrogate-pool';
import { prepareSurrogateJob, surrogatePValue } from './surrogates';
import type { AnalysisSettings, IndicatorName, SurrogateMethod } from './settings';

/** Shown with every result: what the numbers are and are not. */
export const ANALYSIS_CAUTION =
  'Early-warning indicators are statistical evidence of changing dynamics, not forecasts. Decisions affecting public safety, water supply or ecosystems rest with the responsible authorities and local rules.';

/** A marked break in the record: the analysis never runs across one. */
export interface RecordBreak {
  /** in the unit of `time` */
  time: number;
  kind: 'tipping-point' | 'maintenance';
}

export interface AnalysisInput {
  /** UTC milliseconds (timeKind 'utc-ms', the default) or plain numbers in the caller's unit ('numeric'). */
  time: Float64Array;
  value: Float64Array;
  /** Sampling interval in the unit of `time`; inferred (median spacing) when omitted. */
  intervalMs?: number;
  timeKind?: TimeKind;
  /** marked tipping points and maintenance breaks: the stretch starts at the first grid point at or after the latest */
  breaks?: RecordBreak[];
}

/** Why the analysed stretch starts where it does. */
export type StretchStart = 'record-start' | 'shift' | 'tipping-point' | 'maintenance' | 'sampling' | 'span' | 'gap';

export interface AnalysisQuality extends PreparationQuality {
  /** share of observed (not interpolated) points in the analysed stretch */
  coverage: number;
  /** windows not judged because their observed share is below minCoverage */
  windowsBelowCoverage: number;
}

export interface AnalysisResult {
  /** points analysed (the stretch after preparation; n − 1 of them for `difference`) */
  n: number;
  windowPoints: number;
  /** smoother h in points, the kernel standard deviation (moving-average width for that method; null otherwise) */
  bandwidthPoints: number | null;
  /** sampling interval in the recovery-rate unit (days for UTC times, the time unit for numeric times) */
  dt: number;
  rateUnit: 'per day' | 'per time unit';
  /** sampling interval in the unit of `time` */
  interval: number;
  /** abrupt level shifts detected over the whole prepared record (index on its grid; time = first instant of the new level; size = jump of the level, in the series' unit) */
  shifts: { time: number; index: number; size: number }[];
  /** the analysed stretch: its first and last instant, and why it starts there */
  stretch: { from: number; to: number; startsAfter: StretchStart };
  series: { time: Float64Array; value: Float64Array; trend: Float64Array; residual: Float64Array };
  indicators: Partial<Record<IndicatorName, (number | null)[]>>;
  /**
   * Per-point companion values of the indicators that declare them (null where the indicator is): the restoring
   * rate's `standardError` (for a band of ± its multiples), ch's χ²(1) `p`.
   */
  companions: Partial<Record<IndicatorName, Record<string, (number | null)[]>>>;
  /** Every how many windows each indicator was evaluated (1: every window; more for the per-window indicators, see `maxEvaluatedWindows`). */
  evaluatedEvery: Partial<Record<IndicatorName, number>>;
  /** Kendall tau of each indicator against time, with a descriptive normal-approximation p in the indicator's direction
   * (it assumes independent values, which overlapping windows are not: never a gate) */
  kendall: Partial<Record<IndicatorName, { tau: number | null; p: number | null; direction: TrendDirection }>>;
  /**
   * surrogate p in the indicator's direction (two-sided for two-sided indicators); `drawn` says on which record the
   * surrogates were drawn (its residual length n and last instant): this analysis's own in a full analysis, an
   * earlier, shorter one when an incremental update kept the surrogate taus (lib/engine/update.ts)
   */
  significance: Partial<
    Record<
      IndicatorName,
      { p: number | null; count: number; method: SurrogateMethod; taus: number[]; direction: TrendDirection; drawn: { n: number; to: number } }
    >
  >;
  sensitivity: SensitivityResult | null;
  quality: AnalysisQuality;
  caution: string;
}

export type AnalysisSummary = Omit<AnalysisResult, 'series' | 'indicators' | 'companions'> & {
  /** last defined value of each indicator, with its time (and its companion values there, if it has any) */
  latest: Partial<Record<IndicatorName, { time: number; value: number; companions?: Record<string, number | null> } | null>>;
};

const DAY_MS = 86_400_000;

function finiteOrNull(v: number): number | null {
  return Number.isFinite(v) ? v : null;
}

const START_WORDS: Record<StretchStart, string> = {
  'record-start': 'at the start of the record',
  shift: 'after the detected abrupt shift',
  'tipping-point': 'after the marked tipping point',
  maintenance: 'after the maintenance break',
  sampling: 'after the change of sampling interval',
  span: 'at the start of the analysis span',
  gap: 'after the latest long gap',
};

/**
 * Where the analysed stretch starts on the prepared grid: after the latest of the prepared record's own start
 * (record start, span, long gap, sampling change), the last detected shift, and the latest break (first grid
 * point at or after its time). On a tie a marked break names the reason, then a shift. O(number of shifts + breaks) + O(log n) per break.
 */
function stretchStart(
  time: Float64Array,
  prepared: StretchStart,
  shifts: readonly { index: number }[],
  breaks: readonly RecordBreak[],
): { index: number; startsAfter: StretchStart } {
  let best = { index: 0, startsAfter: prepared, rank: 0 };
  const consider = (index: number, startsAfter: StretchStart, rank: number) => {
    if (index > best.index || (index === best.index && index > 0 && rank > best.rank)) best = { index, startsAfter, rank };
  };
  for (const s of shifts) consider(s.index, 'shift', 1);
  for (const b of breaks) {
    if (!(b.time > time[0])) continue;
    let lo = 0,
      hi = time.length;
    while (lo < hi) {
      const mid = (lo + hi) >> 1;
      if (time[mid] < b.time) lo = mid + 1;
      else hi = mid;
    }
    consider(lo, b.kind, 2);
  }
  return { index: best.index, startsAfter: best.startsAfter };
}

/**
 * The whole pipeline: prepare (sampling changes, grid, span, gaps with an observed mask, flat runs, log, seasonal)
 * → abrupt shifts over the prepared record (detectShifts) → the stretch after the latest shift, break or cut →
 * detrend → rolling indicators (per-window ones at no more than maxEvaluatedWindows windows; windows below the
 * coverage floor or inside a flat run not judged) → Kendall tau of each, p in the indicator's direction →
 * surrogate significance (same gaps, interpolation, unjudged and evaluated windows as the record; worker threads
 * unless options.parallel is false, identical numbers either way) → optional sensitivity grid. Window and bandwidth are extents of the stretch. Throws AnalysisInputError for
 * input the caller can fix (a stretch too short for the window names where it starts and why).
 * Cost O(n log n) + O(N·n log n) for N surrogates, plus the shift detector's. Sources: those of each step
 * (README, "Indicator definitions"). The returned arrays are the engine's own (never the caller's input).
 */
export async function runAnalysis(input: AnalysisInput, settings: AnalysisSettings, options: { parallel?: boolean } = {}): Promise<AnalysisResult> {
  return analyseFrame(analysisFrame(input, settings), settings, options);
}

/** runAnalysis from detrending on, for a frame already made (analysisFrame). */
export async function analyseFrame(frame: AnalysisFrame, settings: AnalysisSettings, options: { parallel?: boolean } = {}): Promise<AnalysisResult> {
  const { x, n, w, raw, dt, skip, stride, observed } = frame;
  const names = settings.indicators;
  const d = detrend(x, settings.detrend, { bandwidthPoints: frame.h, movingAverageWidth: settings.movingAverageWidth });
  const companionValues: IndicatorCompanions = {};
  const values = rollingIndicators(d.residual, w, names, { raw, dt, skip, stride, companions: companionValues });
  const trends = indicatorTrends(values);
  const kendall: AnalysisResult['kendall'] = {};
  for (const name of names) kendall[name] = kendallEntry(name, trends[name]!);

  const significance: AnalysisResult['significance'] = {};
  if (settings.surrogates > 0) {
    const job = prepareSurrogateJob(d.residual, raw, {
      method: settings.surrogateMethod,
      seed: settings.seed,
      w,
      dt,
      indicators: [...names],
      stride,
      observed,
      skip,
    });
    const { taus } = await computeSurrogateTaus(job, settings.surrogates, { parallel: options.parallel });
    const drawn = { n, to: frame.time[frame.time.length - 1] };
    for (const name of names) {
      significance[name] = significanceEntry(name, kendall[name]!.tau, Array.from(taus[name]).filter(Number.isFinite), settings.surrogateMethod, drawn);
    }
  }

  const sensitivity = settings.sensitivity
    ? sensitivityGrid(x, x, {
        detrend: settings.detrend,
        movingAverageWidth: settings.movingAverageWidth,
        bandwidth: frame.h / x.length,
        indicators: [...names],
        dt,
        maxEvaluatedWindows: settings.maxEvaluatedWindows,
      })
    : null;
  return assembleResult(frame, settings, { trend: d.trend, residual: d.residual, values, companions: companionValues, kendall, significance, sensitivity });
}

/**
 * Everything an analysis fixes before detrending, shared by the full analysis and the incremental update
 * (lib/engine/update.ts): the prepared record, its shifts, the analysed stretch `x` with its times, the smoother's h,
 * the residual length n (x.length − 1 for `difference`), the window w, Δt, the observed mask and flat runs in residual
 * positions, the unjudged windows and the per-window indicators' stride. Throws AnalysisInputError as runAnalysis
 * documents. Cost O(n) plus the shift detector's (O(n)).
 */
export function analysisFrame(input: AnalysisInput, settings: AnalysisSettings) {
  const kind = input.timeKind ?? 'utc-ms';
  const prepared = prepareSeries(input, settings);
  const whole = prepared.value;
  const shifts =
    settings.shiftDetection === 'on' && whole.length >= 2 * MIN_WINDOW_POINTS
      ? detectShifts(whole).map((s) => ({ time: prepared.time[s.index], index: s.index, size: s.size }))
      : [];
  const cut = stretchStart(prepared.time, prepared.startsAfter, shifts, input.breaks ?? []);
  const x = whole.subarray(cut.index);
  const time = prepared.time.subarray(cut.index);
  const stretchWords = () =>
    x.length === 0
      ? `nothing is left to analyse ${START_WORDS[cut.startsAfter]} (${formatInstant(prepared.time[prepared.time.length - 1], kind)} is the last point)`
      : `the stretch from ${formatInstant(time[0], kind)} to ${formatInstant(time[time.length - 1], kind)} (${x.length} points) starts ${START_WORDS[cut.startsAfter]}`;
  if (x.length < MIN_WINDOW_POINTS) throw new AnalysisInputError(`the series has ${x.length} usable points; at least 8 are needed (${stretchWords()})`);
  const h = extentPoints(settings.bandwidth, x.length, prepared.interval, kind);
  const offset = settings.detrend === 'difference' ? 1 : 0;
  const n = x.length - offset;
  let w: number;
  try {
    w = windowPoints(settings.window, n, prepared.interval, kind);
  } catch (e) {
    if (e instanceof AnalysisInputError && cut.startsAfter !== 'record-start') throw new AnalysisInputError(`${e.message}; ${stretchWords()}`, e.at);
    throw e;
  }
  const dt = kind === 'utc-ms' ? prepared.interval / DAY_MS : prepared.interval;
  const raw = x.subarray(offset);
  // A differenced residual is observed only when both of its points were.
  const observedStretch = prepared.observed.subarray(cut.index);
  const observed = offset === 0 ? observedStretch : observedStretch.subarray(1).map((o, i) => o & observedStretch[i]);
  const flat = prepared.flat.map((r) => ({ start: Math.max(0, r.start - cut.index - offset), end: r.end - cut.index - offset })).filter((r) => r.end > r.start);
  const { skip, belowCoverage } = unjudgedWindows(observed, flat, w, settings.minCoverage);
  const stride = evaluationStride(n - w + 1, settings.maxEvaluatedWindows);
  return { kind, prepared, shifts, cut, x, time, h, offset, n, w, dt, raw, observedStretch, observed, skip, belowCoverage, stride };
}

export type AnalysisFrame = ReturnType<typeof analysisFrame>;

/** An indicator's Kendall entry of a result: τ and the normal-approximation p in its direction. O(1). */
export function kendallEntry(name: IndicatorName, t: { tau: number; s: number; varS: number }): AnalysisResult['kendall'][IndicatorName] & object {
  const direction = INDICATOR_DIRECTIONS[name];
  return { tau: finiteOrNull(t.tau), p: finiteOrNull(normalPInDirection(t.s / Math.sqrt(t.varS), direction)), direction };
}

/** An indicator's significance entry: the surrogate p of τ against the (finite) surrogate taus, in its direction. O(N). */
export function significanceEntry(
  name: IndicatorName,
  tau: number | null,
  taus: number[],
  method: SurrogateMethod,
  drawn: { n: number; to: number },
): AnalysisResult['significance'][IndicatorName] & object {
  const direction = INDICATOR_DIRECTIONS[name];
  const { p, count } = surrogatePValue(tau ?? Number.NaN, Float64Array.from(taus), direction);
  return { p, count, method, taus, direction, drawn };
}

/** The result of an analysis from its frame and the per-point arrays and statistics computed on it. O(n). */
export function assembleResult(
  frame: AnalysisFrame,
  settings: AnalysisSettings,
  parts: {
    trend: Float64Array;
    residual: Float64Array;
    values: Partial<Record<IndicatorName, Float64Array>>;
    companions: IndicatorCompanions;
    kendall: AnalysisResult['kendall'];
    significance: AnalysisResult['significance'];
    sensitivity: SensitivityResult | null;
  },
): AnalysisResult {
  const { kind, prepared, time, n, w, dt, h, raw, cut, observedStretch } = frame;
  const companions: AnalysisResult['companions'] = {};
  for (const [name, byName] of Object.entries(parts.companions) as [IndicatorName, Record<string, Float64Array>][]) {
    companions[name] = Object.fromEntries(Object.entries(byName).map(([k, a]) => [k, toNullable(a)]));
  }
  const evaluatedEvery: AnalysisResult['evaluatedEvery'] = Object.fromEntries(
    settings.indicators.map((name) => [name, indicatorDefinition(name)!.kind === 'window' ? frame.stride : 1]),
  );
  let seen = 0;
  for (const o of observedStretch) seen += o;
  return {
    n,
    windowPoints: w,
    bandwidthPoints:
      settings.detrend === 'gaussian' || settings.detrend === 'local-linear' ? h : settings.detrend === 'moving-average' ? settings.movingAverageWidth : null,
    dt,
    rateUnit: kind === 'utc-ms' ? 'per day' : 'per time unit',
    interval: prepared.interval,
    shifts: frame.shifts,
    stretch: { from: time[0], to: time[time.length - 1], startsAfter: cut.startsAfter },
    series: { time: time.subarray(frame.offset), value: raw, trend: parts.trend, residual: parts.residual },
    indicators: lazyIndicators(parts.values),
    companions,
    evaluatedEvery,
    kendall: parts.kendall,
    significance: parts.significance,
    sensitivity: parts.sensitivity,
    quality: { ...prepared.quality, coverage: seen / observedStretch.length, windowsBelowCoverage: frame.belowCoverage },
    caution: ANALYSIS_CAUTION,
  };
}

/** The result without per-point arrays (JSON-friendly), plus the latest value of each indicator. O(n). */
export function summarizeAnalysis(result: AnalysisResult): AnalysisSummary {
  const { series, indicators, companions, ...rest } = result;
  const latest: AnalysisSummary['latest'] = {};
  const typed = typedIndicators(indicators);
  for (const name of Object.keys(indicators) as IndicatorName[]) {
    const vals: ArrayLike<number | null> = typed?.[name] ?? indicators[name]!;
    let i = vals.length - 1;
    while (i >= 0 && !Number.isFinite(vals[i])) i--;
    const extra = companions?.[name];
    latest[name] =
      i < 0
        ? null
        : { time: series.time[i], value: vals[i]!, ...(extra ? { companions: Object.fromEntries(Object.entries(extra).map(([k, a]) => [k, a[i]])) } : {}) };
  }
  return { ...rest, latest };
}
