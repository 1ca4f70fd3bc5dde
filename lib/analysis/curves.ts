import type { AnalysisResult } from '@/lib/engine/analyze';
import { indicatorArrays } from '@/lib/engine/indicator-arrays';
import type { IndicatorName } from '@/lib/engine/settings';

/**
 * The per-point curves an analysis keeps for its charts, thinned to a bounded number of points. Pure; shared by
 * the snapshot store (lib/analysis/snapshot) and the chart views (lib/analysis/view).
 */

/** Charts never need more points than a screen is wide; larger records are thinned to at most this many. */
export const MAX_CURVE_POINTS = 2000;

export interface SnapshotCurves {
  /** Every `stride`-th analysed point is kept (plus the last one). */
  stride: number;
  time: number[];
  value: (number | null)[];
  trend: (number | null)[];
  residual: (number | null)[];
  indicators: Record<string, (number | null)[]>;
  /**
   * Indicators computed at every k-th window only (costly ones, `evaluatedEvery` k > 1): their kept points carry
   * the latest value computed in the thinned stretch each stands for. Absent on snapshots stored before.
   */
  evaluatedEvery?: Record<string, number>;
  /**
   * Indicators that carry a standard error (a `standardError` companion, e.g. the restoring rate): the value
   * ± SE_BAND_Z·SE at each kept point, the chart's uncertainty band. Absent on snapshots stored before.
   */
  bands?: Record<string, { lower: (number | null)[]; upper: (number | null)[] }>;
  /** Surrogate taus per indicator, for the null-distribution histogram. */
  surrogateTaus: Record<string, number[]>;
  sensitivity: AnalysisResult['sensitivity'];
}

/**
 * Half-width of the drawn standard-error band in standard errors: ±1.96·SE, the normal 95 % interval of each
 * window's estimate (common practice; charts say so in their legend).
 */
export const SE_BAND_Z = 1.96;

/** The companion that makes an indicator's band: its per-window standard error. */
const STANDARD_ERROR = 'standardError';

function finite(v: number): number | null {
  return Number.isFinite(v) ? v : null;
}

/** Indices kept when n points are thinned to at most `max`: 0, s, 2s, … and always n − 1. O(max). */
export function thinnedIndices(n: number, max = MAX_CURVE_POINTS): { stride: number; indices: number[] } {
  const stride = Math.max(1, Math.ceil(n / max));
  const indices: number[] = [];
  for (let i = 0; i < n; i += stride) indices.push(i);
  if (n > 0 && indices[indices.length - 1] !== n - 1) {
    if (indices.length >= max) indices[indices.length - 1] = n - 1;
    else indices.push(n - 1);
  }
  return { stride, indices };
}

/**
 * One value per kept index for an indicator computed at every k-th window only: the latest non-null value after
 * the previous kept index and at or before this one, so a chart thinned more coarsely than k still shows every
 * evaluation its stretch holds, and one thinned more finely shows gaps, not invented values. O(n).
 */
function latestInEachStretch(values: ArrayLike<number | null | undefined>, indices: number[]): (number | null)[] {
  let from = 0;
  return indices.map((index) => {
    let found: number | null = null;
    for (let i = index; i >= from; i--) {
      const v = values[i];
      if (v !== null && v !== undefined && Number.isFinite(v)) {
        found = v;
        break;
      }
    }
    from = index + 1;
    return found;
  });
}

/** The kept values of one indicator: at the kept indices, or, for a sparse one, the latest in each stretch. */
export function thinIndicator(values: ArrayLike<number | null | undefined>, indices: number[], evaluatedEvery = 1): (number | null)[] {
  return evaluatedEvery > 1 ? latestInEachStretch(values, indices) : indices.map((i) => values[i] ?? null);
}

/** The per-point arrays of a result, thinned for charts. O(n). */
export function curvesOf(result: AnalysisResult, max = MAX_CURVE_POINTS): SnapshotCurves {
  const { stride, indices } = thinnedIndices(result.series.time.length, max);
  const pick = (source: ArrayLike<number>) => indices.map((i) => finite(source[i]));
  // The typed arrays (NaN where none), not the result's nullable copies, which a snapshot would build only to thin.
  const typed = indicatorArrays(result);
  const indicators: SnapshotCurves['indicators'] = {};
  const evaluatedEvery: Record<string, number> = {};
  for (const name of Object.keys(result.indicators) as IndicatorName[]) {
    const every = result.evaluatedEvery[name] ?? 1;
    if (every > 1) evaluatedEvery[name] = every;
    indicators[name] = every > 1 ? thinIndicator(typed[name]!, indices, every) : pick(typed[name]!);
  }
  const bands: NonNullable<SnapshotCurves['bands']> = {};
  for (const [name, byName] of Object.entries(result.companions) as [IndicatorName, Record<string, (number | null)[]>][]) {
    const se = byName?.[STANDARD_ERROR];
    const values = typed[name];
    if (!se || !values) continue;
    const every = result.evaluatedEvery[name] ?? 1;
    // Both edges are finite exactly where value and SE are (NaN where either is none), so a sparse indicator's edges
    // come from the same window.
    const edge = (sign: number) => Array.from(values, (v, i) => (se[i] === null ? Number.NaN : v + sign * SE_BAND_Z * se[i]!));
    bands[name] = { lower: thinIndicator(edge(-1), indices, every), upper: thinIndicator(edge(1), indices, every) };
  }
  const surrogateTaus: SnapshotCurves['surrogateTaus'] = {};
  for (const [name, sig] of Object.entries(result.significance)) surrogateTaus[name] = sig!.taus;
  return {
    stride,
    time: indices.map((i) => result.series.time[i]),
    value: pick(result.series.value),
    trend: pick(result.series.trend),
    residual: pick(result.series.residual),
    indicators,
    ...(Object.keys(evaluatedEvery).length ? { evaluatedEvery } : {}),
    ...(Object.keys(bands).length ? { bands } : {}),
    surrogateTaus,
    sensitivity: result.sensitivity,
  };
}
