import type { AnalysisResult, AnalysisSummary } from '@/lib/engine/analyze';
import type { TrendDirection } from '@/lib/engine/direction';
import type { SensitivityResult } from '@/lib/engine/sensitivity';
import { analysisSettingsSchema, type AnalysisSettings, type IndicatorName } from '@/lib/engine/settings';
import { curvesOf, MAX_CURVE_POINTS, thinIndicator, thinnedIndices, type SnapshotCurves } from './curves';

/** The per-point curves of an analysis as stored on a snapshot and sent to charts (every `stride`-th point). */
export type CurveSet = SnapshotCurves;

/**
 * The data-quality findings of an analysis. The fields after `droppedBeforeSpan` are absent on snapshots stored
 * before the engine reported them, so screens treat them as optional.
 */
export type ViewQuality = Omit<AnalysisResult['quality'], 'coverage' | 'windowsBelowCoverage' | 'flatRuns' | 'samplingChanges' | 'samplingHandling'> &
  Partial<Pick<AnalysisResult['quality'], 'coverage' | 'windowsBelowCoverage' | 'flatRuns' | 'samplingChanges' | 'samplingHandling'>>;

/**
 * The direction a snapshot's p-values were computed in. Snapshots from before directions were recorded tested
 * every indicator in the upper tail, so that is what they are labelled with.
 */
const UPPER_TAIL: TrendDirection = 'rising';

export interface HistogramBin {
  from: number;
  to: number;
  count: number;
}

/** Everything the workbench, the alert evidence and the report draw, computed here so components only render. */
export interface AnalysisView {
  settings: AnalysisSettings;
  n: number;
  windowPoints: number;
  bandwidthPoints: number | null;
  /** sampling interval in ms */
  interval: number;
  /** time one rolling window covers: what each indicator point is computed from */
  windowSpanMs: number;
  curves: Omit<CurveSet, 'surrogateTaus' | 'sensitivity'>;
  indicators: IndicatorName[];
  /** Kendall tau of each indicator's trend; p is descriptive only (it assumes independent values). */
  kendall: Partial<Record<IndicatorName, { tau: number | null; p: number | null; direction: TrendDirection }>>;
  /**
   * `pointsSinceDrawn`: how many points the record had gained since its surrogates were drawn (0 when drawn on this
   * very record, or not recorded): an incremental analysis reads its τ against the surrogate taus of an earlier full one.
   */
  significance: Partial<
    Record<IndicatorName, { p: number | null; count: number; method: string; direction: TrendDirection; bins: HistogramBin[]; pointsSinceDrawn?: number }>
  >;
  sensitivity: (SensitivityResult & { chosen: { window: number; bandwidth: number | null } }) | null;
  quality: ViewQuality | null;
  /** detected abrupt shifts of level (time = first instant of the new level, UTC ms) */
  shifts: { time: number; index: number; size?: number }[];
  /** the analysed stretch and why it starts where it does; null on snapshots stored before it was recorded */
  stretch: AnalysisResult['stretch'] | null;
}

/**
 * Points per drawn curve: more than a chart on a wide screen has pixel columns, and about a third of what is stored,
 * so a series page carries a few tens of kB of curves instead of a few hundred.
 */
export const CHART_POINTS = 720;

/**
 * Significant digits of a drawn point: no axis or tooltip shows more. The indicator table, the exports and every
 * statistic keep full float64 precision.
 */
export const CHART_DIGITS = 6;

function forChart(values: (number | null)[]): (number | null)[] {
  return values.map((v) => (v === null ? null : Number(v.toPrecision(CHART_DIGITS))));
}

/** Thins stored curves further for a chart (stored curves already hold at most MAX_CURVE_POINTS). O(n). */
export function thinCurves(curves: CurveSet, maxPoints = MAX_CURVE_POINTS): CurveSet {
  const { stride, indices } = thinnedIndices(curves.time.length, maxPoints);
  if (stride === 1) return curves;
  const pick = <T>(a: T[]) => indices.map((i) => a[i]);
  const indicators: CurveSet['indicators'] = {};
  for (const [name, values] of Object.entries(curves.indicators)) indicators[name] = thinIndicator(values, indices, curves.evaluatedEvery?.[name]);
  const bands = curves.bands && mapBands(curves.bands, (edge, name) => thinIndicator(edge, indices, curves.evaluatedEvery?.[name]));
  return {
    ...curves,
    stride: curves.stride * stride,
    time: pick(curves.time),
    value: pick(curves.value),
    trend: pick(curves.trend),
    residual: pick(curves.residual),
    indicators,
    ...(bands ? { bands } : {}),
  };
}

/** Each band's two edges through `f`. O(points). */
function mapBands(bands: NonNullable<CurveSet['bands']>, f: (edge: (number | null)[], name: string) => (number | null)[]): NonNullable<CurveSet['bands']> {
  return Object.fromEntries(Object.entries(bands).map(([name, { lower, upper }]) => [name, { lower: f(lower, name), upper: f(upper, name) }]));
}

/**
 * Equal-width histogram of the surrogate taus over a range that also holds the observed tau, with ⌈√N⌉ bins
 * (10 to 40). Square-root choice: common practice for a first look at a distribution. O(N).
 */
export function tauHistogram(taus: number[], observed: number | null): HistogramBin[] {
  const values = taus.filter(Number.isFinite);
  if (values.length === 0) return [];
  let lo = Math.min(...values);
  let hi = Math.max(...values);
  if (observed !== null && Number.isFinite(observed)) {
    lo = Math.min(lo, observed);
    hi = Math.max(hi, observed);
  }
  if (hi - lo < 1e-9) {
    lo -= 0.05;
    hi += 0.05;
  }
  const count = Math.min(40, Math.max(10, Math.ceil(Math.sqrt(values.length))));
  const width = (hi - lo) / count;
  const bins: HistogramBin[] = Array.from({ length: count }, (_, i) => ({ from: lo + i * width, to: lo + (i + 1) * width, count: 0 }));
  for (const v of values) bins[Math.min(count - 1, Math.floor((v - lo) / width))].count++;
  return bins;
}

function nearest(list: number[], target: number): number {
  return list.reduce((best, v) => (Math.abs(v - target) < Math.abs(best - target) ? v : best), list[0]);
}

/** Builds the chart view from an analysis summary and its curves (a stored snapshot or a fresh result). */
export function buildView(
  settingsInput: unknown,
  summary: Pick<AnalysisSummary, 'n' | 'windowPoints' | 'bandwidthPoints' | 'interval'> & {
    kendall: Partial<Record<IndicatorName, { tau: number | null; p: number | null; direction?: TrendDirection }>>;
    significance?: Partial<
      Record<
        IndicatorName,
        Omit<NonNullable<AnalysisSummary['significance'][IndicatorName]>, 'taus' | 'direction' | 'drawn'> & {
          taus?: number[];
          direction?: TrendDirection;
          drawn?: { n: number; to: number };
        }
      >
    >;
    sensitivity?: SensitivityResult | null;
    quality?: ViewQuality | null;
    shifts?: AnalysisResult['shifts'];
    stretch?: AnalysisResult['stretch'] | null;
  },
  stored: CurveSet,
  maxPoints = CHART_POINTS,
): AnalysisView {
  const settings = analysisSettingsSchema.parse(settingsInput ?? {});
  const curves = thinCurves(stored, maxPoints);
  const indicators = settings.indicators.filter((name) => curves.indicators[name] !== undefined);
  const kendall: AnalysisView['kendall'] = {};
  for (const [name, k] of Object.entries(summary.kendall) as [IndicatorName, (typeof summary.kendall)[IndicatorName]][]) {
    if (k) kendall[name] = { tau: k.tau, p: k.p, direction: k.direction ?? UPPER_TAIL };
  }
  const significance: AnalysisView['significance'] = {};
  for (const name of indicators) {
    const s = summary.significance?.[name];
    if (!s) continue;
    const taus = stored.surrogateTaus?.[name] ?? s.taus ?? [];
    significance[name] = {
      p: s.p,
      count: s.count,
      method: s.method,
      direction: s.direction ?? UPPER_TAIL,
      bins: tauHistogram(taus, summary.kendall[name]?.tau ?? null),
      pointsSinceDrawn: s.drawn ? summary.n - s.drawn.n : 0,
    };
  }
  // The grid's axes are fractions of the analysed stretch; a window or bandwidth given in points or as a duration
  // is placed on them by the points it came to.
  const chosenWindow = typeof settings.window === 'number' ? settings.window : summary.windowPoints / summary.n;
  const chosenBandwidth =
    typeof settings.bandwidth === 'number' ? settings.bandwidth : summary.bandwidthPoints === null ? null : summary.bandwidthPoints / summary.n;
  const grid = stored.sensitivity ?? summary.sensitivity ?? null;
  const { surrogateTaus: _taus, sensitivity: _grid, ...thinned } = curves;
  const indicatorCurves: CurveSet['indicators'] = {};
  for (const name of indicators) indicatorCurves[name] = forChart(curves.indicators[name]!);
  const { bands: storedBands, ...unbanded } = thinned;
  const shownBands = storedBands && Object.fromEntries(Object.entries(storedBands).filter(([name]) => indicators.includes(name as IndicatorName)));
  const chartCurves = {
    ...unbanded,
    ...(shownBands && Object.keys(shownBands).length ? { bands: mapBands(shownBands, forChart) } : {}),
    value: forChart(thinned.value),
    trend: forChart(thinned.trend),
    residual: forChart(thinned.residual),
    indicators: indicatorCurves,
  };
  return {
    settings,
    n: summary.n,
    windowPoints: summary.windowPoints,
    bandwidthPoints: summary.bandwidthPoints,
    interval: summary.interval,
    windowSpanMs: summary.windowPoints * summary.interval,
    curves: chartCurves,
    indicators,
    kendall,
    significance,
    sensitivity: grid
      ? {
          ...grid,
          chosen: {
            window: nearest(grid.windows, chosenWindow),
            bandwidth: grid.bandwidths && chosenBandwidth !== null ? nearest(grid.bandwidths, chosenBandwidth) : null,
          },
        }
      : null,
    quality: summary.quality ?? null,
    shifts: summary.shifts ?? [],
    stretch: summary.stretch ?? null,
  };
}

/**
 * A chart view saved with an older snapshot, completed with what views carry since: no shifts or stretch recorded
 * (empty, null) and p-values labelled with the upper tail they were computed in. A current view is returned as it is.
 * O(number of indicators).
 */
export function completeSavedView(saved: AnalysisView): AnalysisView {
  if (Array.isArray(saved.shifts) && saved.stretch !== undefined && Object.values(saved.kendall).every((k) => k?.direction)) return saved;
  const kendall: AnalysisView['kendall'] = {};
  for (const [name, k] of Object.entries(saved.kendall) as [IndicatorName, AnalysisView['kendall'][IndicatorName]][]) {
    if (k) kendall[name] = { ...k, direction: k.direction ?? UPPER_TAIL };
  }
  const significance: AnalysisView['significance'] = {};
  for (const [name, s] of Object.entries(saved.significance) as [IndicatorName, AnalysisView['significance'][IndicatorName]][]) {
    if (s) significance[name] = { ...s, direction: s.direction ?? UPPER_TAIL };
  }
  return { ...saved, kendall, significance, shifts: saved.shifts ?? [], stretch: saved.stretch ?? null };
}

/** The view of a fresh engine result (preview, exports from posted settings). */
export function viewFromResult(result: AnalysisResult, settings: AnalysisSettings, maxPoints = CHART_POINTS): AnalysisView {
  return buildView(settings, result, curvesOf(result, maxPoints), maxPoints);
}

/** The view of a stored snapshot, or null when it holds no curves (failed or pre-curves snapshots). */
export function viewFromSnapshot(snapshot: { settings: unknown; summary: unknown; curves?: unknown; status?: string }): AnalysisView | null {
  if (snapshot.status === 'error' || !snapshot.curves || !snapshot.summary) return null;
  const curves = snapshot.curves as Partial<CurveSet>;
  if (!Array.isArray(curves.time)) return null;
  return buildView(snapshot.settings, snapshot.summary as Parameters<typeof buildView>[1], {
    ...(curves as CurveSet),
    surrogateTaus: curves.surrogateTaus ?? {},
  });
}
