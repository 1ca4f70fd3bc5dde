import { detrend } from './detrend';
import { AnalysisInputError } from './errors';
import { indicatorTrends } from './kendall';
import { prepareSeries, type PreparationQuality, type TimeKind } from './prepare';
import { rollingIndicators, windowPoints } from './rolling';
import { sensitivityGrid, type SensitivityResult } from './sensitivity';
import { computeSurrogateTaus } from './surrogate-pool';
import { prepareSurrogateJob, surrogatePValue } from './surrogates';
import type { AnalysisSettings, IndicatorName, SurrogateMethod } from './settings';
import { INDICATOR_DIRECTIONS, type TrendDirection } from './direction';
import { extentPoints } from './extent';

/** Shown with every result: what the numbers are and are not. */
export const ANALYSIS_CAUTION =
  'Early-warning indicators are statistical evidence of changing dynamics, not forecasts. Decisions affecting public safety, water supply or ecosystems rest with the responsible authorities and local rules.';

export interface AnalysisInput {
  /** UTC milliseconds (timeKind 'utc-ms', the default) or plain numbers in the caller's unit ('numeric'). */
  time: Float64Array;
  value: Float64Array;
  /** Sampling interval in the unit of `time`; inferred (median spacing) when omitted. */
  intervalMs?: number;
  timeKind?: TimeKind;
  /** TEMP engine contract shim: marks the stretch starts after. */
  breaks?: { time: number; kind: 'transition' | 'maintenance' }[];
}

/** TEMP engine contract shim: why the analysed stretch starts where it does. */
export type StretchStart = 'record-start' | 'shift' | 'transition' | 'maintenance' | 'sampling' | 'span' | 'gap';

export interface AnalysisResult {
  /** points analysed (after preparation; n − 1 of them for `difference`) */
  n: number;
  windowPoints: number;
  /** Gaussian h in points (moving-average width for that method; null otherwise) */
  bandwidthPoints: number | null;
  /** sampling interval in the recovery-rate unit (days for UTC times, the time unit for numeric times) */
  dt: number;
  rateUnit: 'per day' | 'per time unit';
  /** sampling interval in the unit of `time` */
  interval: number;
  series: { time: Float64Array; value: Float64Array; trend: Float64Array; residual: Float64Array };
  indicators: Partial<Record<IndicatorName, (number | null)[]>>;
  kendall: Partial<Record<IndicatorName, { tau: number | null; p: number | null; direction: TrendDirection }>>;
  significance: Partial<Record<IndicatorName, { p: number | null; count: number; method: SurrogateMethod; taus: number[]; direction: TrendDirection }>>;
  sensitivity: SensitivityResult | null;
  shifts: { time: number; index: number }[];
  stretch: { from: number; to: number; startsAfter: StretchStart };
  quality: PreparationQuality & {
    coverage: number;
    windowsBelowCoverage: number;
    flatRuns: { from: number; to: number; points: number }[];
    samplingChanges: { time: number; before: number; after: number }[];
    samplingHandling: 'start-after' | 'subsample' | null;
  };
  caution: string;
}

export type AnalysisSummary = Omit<AnalysisResult, 'series' | 'indicators'> & {
  /** last defined value of each indicator, with its time */
  latest: Partial<Record<IndicatorName, { time: number; value: number } | null>>;
};

const DAY_MS = 86_400_000;

function finiteOrNull(v: number): number | null {
  return Number.isFinite(v) ? v : null;
}

function toNullable(a: Float64Array): (number | null)[] {
  const out = new Array<number | null>(a.length);
  for (let i = 0; i < a.length; i++) out[i] = Number.isFinite(a[i]) ? a[i] : null;
  return out;
}

/** The typed indicator arrays behind each result, for summaries that need no per-point copies. */
const rawIndicators = new WeakMap<object, Partial<Record<IndicatorName, Float64Array>>>();

/**
 * Indicator arrays as (number | null)[] built on first read and cached: a million-point array of boxed
 * numbers costs ~100 ms and ~24 MB, which a summary-only caller should not pay. Enumerable getters, so
 * JSON.stringify, spreading and Object.entries see ordinary arrays.
 */
function lazyIndicators(values: Partial<Record<IndicatorName, Float64Array>>): AnalysisResult['indicators'] {
  const out: AnalysisResult['indicators'] = {};
  for (const name of Object.keys(values) as IndicatorName[]) {
    let cache: (number | null)[] | undefined;
    Object.defineProperty(out, name, { enumerable: true, get: () => (cache ??= toNullable(values[name]!)) });
  }
  rawIndicators.set(out, values);
  return out;
}

/**
 * The whole pipeline: prepare (grid, gaps, span, log, seasonal) → detrend → rolling indicators →
 * Kendall tau of each → surrogate significance (worker threads unless options.parallel is false;
 * identical numbers either way) → optional sensitivity grid. Throws AnalysisInputError for input the
 * caller can fix. Cost O(n log n) + O(N·n log n) for N surrogates. Sources: those of each step (README,
 * "Indicator definitions"). The returned arrays are the engine's own (never the caller's input).
 */
export async function runAnalysis(input: AnalysisInput, settings: AnalysisSettings, options: { parallel?: boolean } = {}): Promise<AnalysisResult> {
  const kind = input.timeKind ?? 'utc-ms';
  // TEMP engine contract shim: span as an extent, breaks cut the stretch, no shift detection.
  const roughPoints = input.time.length > 1 ? (input.time[input.time.length - 1] - input.time[0]) / (input.intervalMs ?? 1) + 1 : input.time.length;
  const spanPoints = settings.span === null || input.intervalMs === undefined ? null : Math.max(8, Math.round(extentPoints(settings.span, roughPoints, input.intervalMs, kind)));
  const prepared = prepareSeries(input, { ...settings, spanPoints });
  let startsAfter: StretchStart = prepared.quality.droppedBeforeSpan > 0 ? 'span' : prepared.quality.droppedBeforeStretch > 0 ? 'gap' : 'record-start';
  let cut = 0;
  for (const mark of input.breaks ?? []) {
    const at = prepared.time.findIndex((t) => t >= mark.time);
    if (at > cut) {
      cut = at;
      startsAfter = mark.kind;
    }
  }
  const x = prepared.value.subarray(cut);
  const stretchTime = prepared.time.subarray(cut);
  if (x.length < 8) throw new AnalysisInputError(`the stretch after ${startsAfter} has ${x.length} usable points; at least 8 are needed`);
  const h = extentPoints(settings.bandwidth, x.length, prepared.interval, kind);
  const d = detrend(x, settings.detrend, { bandwidthPoints: h, movingAverageWidth: settings.movingAverageWidth });
  const n = d.residual.length;
  const w = windowPoints(Math.round(extentPoints(settings.window, n, prepared.interval, kind)) / n, n);
  const dt = kind === 'utc-ms' ? prepared.interval / DAY_MS : prepared.interval;
  const raw = x.subarray(d.offset);
  const names = settings.indicators;
  const values = rollingIndicators(d.residual, w, names, { raw, dt });

  const indicators = lazyIndicators(values);
  const kendall: AnalysisResult['kendall'] = {};
  const trends = indicatorTrends(values);
  for (const name of names) kendall[name] = { tau: finiteOrNull(trends[name]!.tau), p: finiteOrNull(trends[name]!.p), direction: INDICATOR_DIRECTIONS[name] };

  const significance: AnalysisResult['significance'] = {};
  if (settings.surrogates > 0) {
    const job = prepareSurrogateJob(d.residual, raw, { method: settings.surrogateMethod, seed: settings.seed, w, dt, indicators: [...names] });
    const { taus } = await computeSurrogateTaus(job, settings.surrogates, { parallel: options.parallel });
    for (const name of names) {
      const { p, count } = surrogatePValue(kendall[name]!.tau ?? Number.NaN, taus[name]);
      significance[name] = { p, count, method: settings.surrogateMethod, taus: Array.from(taus[name]).filter(Number.isFinite), direction: INDICATOR_DIRECTIONS[name] };
    }
  }

  const sensitivity = settings.sensitivity
    ? sensitivityGrid(x, x, { detrend: settings.detrend, movingAverageWidth: settings.movingAverageWidth, bandwidth: h / x.length, indicators: [...names], dt })
    : null;

  return {
    n,
    windowPoints: w,
    bandwidthPoints: settings.detrend === 'gaussian' ? h : settings.detrend === 'moving-average' ? settings.movingAverageWidth : null,
    dt,
    rateUnit: kind === 'utc-ms' ? 'per day' : 'per time unit',
    interval: prepared.interval,
    series: { time: stretchTime.subarray(d.offset), value: raw, trend: d.trend, residual: d.residual },
    indicators,
    kendall,
    significance,
    sensitivity,
    shifts: [],
    stretch: { from: stretchTime[0], to: stretchTime[stretchTime.length - 1], startsAfter },
    quality: { ...prepared.quality, coverage: 1 - prepared.quality.filledPoints / prepared.value.length, windowsBelowCoverage: 0, flatRuns: [], samplingChanges: [], samplingHandling: null },
    caution: ANALYSIS_CAUTION,
  };
}

/** The result without per-point arrays (JSON-friendly), plus the latest value of each indicator. O(n). */
export function summarizeAnalysis(result: AnalysisResult): AnalysisSummary {
  const { series, indicators, ...rest } = result;
  const latest: AnalysisSummary['latest'] = {};
  const typed = rawIndicators.get(indicators);
  for (const name of Object.keys(indicators) as IndicatorName[]) {
    const vals: ArrayLike<number | null> = typed?.[name] ?? indicators[name]!;
    let i = vals.length - 1;
    while (i >= 0 && !Number.isFinite(vals[i])) i--;
    latest[name] = i >= 0 ? { time: series.time[i], value: vals[i]! } : null;
  }
  return { ...rest, latest };
}
