import type { AnalysisResult, AnalysisSummary } from '@/lib/engine/analyze';
import type { SensitivityResult } from '@/lib/engine/sensitivity';
import { analysisSettingsSchema, type AnalysisSettings, type IndicatorName } from '@/lib/engine/settings';
import type { PreparationQuality } from '@/lib/engine/prepare';

/** Longest curve a chart is sent: beyond this a line chart shows no more detail on any screen we target. */
export const CHART_POINTS = 2000;

/** The per-point curves of an analysis, as stored on a snapshot and as sent to charts (every `stride`-th point). */
export interface CurveSet {
  stride: number;
  time: number[];
  value: number[];
  trend: number[];
  residual: number[];
  indicators: Partial<Record<IndicatorName, (number | null)[]>>;
  surrogateTaus: Partial<Record<IndicatorName, number[]>>;
  sensitivity?: SensitivityResult | null;
}

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
  kendall: Partial<Record<IndicatorName, { tau: number | null; p: number | null }>>;
  significance: Partial<Record<IndicatorName, { p: number | null; count: number; method: string; bins: HistogramBin[] }>>;
  sensitivity: (SensitivityResult & { chosen: { window: number; bandwidth: number | null } }) | null;
  quality: PreparationQuality | null;
}

function finite(v: number): number | null {
  return Number.isFinite(v) ? v : null;
}

/**
 * Keeps every k-th point (k = ⌈n / maxPoints⌉) and always the last one, so the newest value and the window band
 * drawn at the end of the record stay exact. O(n).
 */
export function thinCurves(curves: CurveSet, maxPoints = CHART_POINTS): CurveSet {
  const n = curves.time.length;
  const k = Math.max(1, Math.ceil(n / maxPoints));
  if (k === 1) return curves;
  const keep: number[] = [];
  for (let i = 0; i < n; i += k) keep.push(i);
  if (keep[keep.length - 1] !== n - 1) keep.push(n - 1);
  const pick = <T,>(a: T[]) => keep.map((i) => a[i]);
  const indicators: CurveSet['indicators'] = {};
  for (const [name, values] of Object.entries(curves.indicators) as [IndicatorName, (number | null)[]][]) indicators[name] = pick(values);
  return {
    ...curves,
    stride: curves.stride * k,
    time: pick(curves.time),
    value: pick(curves.value),
    trend: pick(curves.trend),
    residual: pick(curves.residual),
    indicators,
  };
}

/** An engine result as a (thinned) curve set: the shape snapshots store and charts read. O(n). */
export function curvesFromResult(result: AnalysisResult, maxPoints = CHART_POINTS): CurveSet {
  const surrogateTaus: CurveSet['surrogateTaus'] = {};
  for (const [name, s] of Object.entries(result.significance) as [IndicatorName, { taus: number[] }][]) surrogateTaus[name] = s.taus;
  return thinCurves(
    {
      stride: 1,
      time: Array.from(result.series.time),
      value: Array.from(result.series.value, (v) => finite(v) ?? Number.NaN),
      trend: Array.from(result.series.trend),
      residual: Array.from(result.series.residual),
      indicators: result.indicators,
      surrogateTaus,
      sensitivity: result.sensitivity,
    },
    maxPoints,
  );
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
  summary: Pick<AnalysisSummary, 'n' | 'windowPoints' | 'bandwidthPoints' | 'interval' | 'kendall'> & {
    significance?: AnalysisSummary['significance'];
    sensitivity?: SensitivityResult | null;
    quality?: PreparationQuality | null;
  },
  stored: CurveSet,
  maxPoints = CHART_POINTS,
): AnalysisView {
  const settings = analysisSettingsSchema.parse(settingsInput ?? {});
  const curves = thinCurves(stored, maxPoints);
  const indicators = settings.indicators.filter((name) => curves.indicators[name] !== undefined);
  const significance: AnalysisView['significance'] = {};
  for (const name of indicators) {
    const s = summary.significance?.[name];
    if (!s) continue;
    const taus = stored.surrogateTaus?.[name] ?? s.taus ?? [];
    significance[name] = { p: s.p, count: s.count, method: s.method, bins: tauHistogram(taus, summary.kendall[name]?.tau ?? null) };
  }
  const grid = stored.sensitivity ?? summary.sensitivity ?? null;
  const { surrogateTaus: _taus, sensitivity: _grid, ...chartCurves } = curves;
  return {
    settings,
    n: summary.n,
    windowPoints: summary.windowPoints,
    bandwidthPoints: summary.bandwidthPoints,
    interval: summary.interval,
    windowSpanMs: summary.windowPoints * summary.interval,
    curves: chartCurves,
    indicators,
    kendall: summary.kendall,
    significance,
    sensitivity: grid
      ? { ...grid, chosen: { window: nearest(grid.windows, settings.window), bandwidth: grid.bandwidths ? nearest(grid.bandwidths, settings.bandwidth) : null } }
      : null,
    quality: summary.quality ?? null,
  };
}

/** The view of a fresh engine result (preview, exports from posted settings). */
export function viewFromResult(result: AnalysisResult, settings: AnalysisSettings, maxPoints = CHART_POINTS): AnalysisView {
  return buildView(settings, result, curvesFromResult(result, maxPoints), maxPoints);
}

/** The view of a stored snapshot, or null when it holds no curves (failed or pre-curves snapshots). */
export function viewFromSnapshot(snapshot: { settings: unknown; summary: unknown; curves: unknown; status?: string }): AnalysisView | null {
  if (snapshot.status === 'error' || !snapshot.curves || !snapshot.summary) return null;
  const curves = snapshot.curves as Partial<CurveSet>;
  if (!Array.isArray(curves.time)) return null;
  return buildView(snapshot.settings, snapshot.summary as AnalysisSummary, { ...(curves as CurveSet), surrogateTaus: curves.surrogateTaus ?? {} });
}

/** One row per point for the chart library: { t, value, trend, residual, <indicator>: number | null }. O(n). */
export function chartRows(curves: AnalysisView['curves']): Record<string, number | null>[] {
  return curves.time.map((t, i) => {
    const row: Record<string, number | null> = {
      t,
      value: finite(curves.value[i]),
      trend: finite(curves.trend[i]),
      residual: finite(curves.residual[i]),
    };
    for (const [name, values] of Object.entries(curves.indicators)) row[name] = values?.[i] ?? null;
    return row;
  });
}
