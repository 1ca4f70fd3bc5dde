import { detrend, type DetrendMethod } from './detrend';
import { needsRawMean } from './indicators';
import { indicatorTrends } from './kendall';
import { evaluationStride, MIN_WINDOW_POINTS, rollingIndicators, windowMoments } from './rolling';
import type { IndicatorName } from './settings';

function steps(from: number, to: number, step: number): number[] {
  const out: number[] = [];
  for (let k = 0; from + k * step <= to + 1e-9; k++) out.push(Math.round((from + k * step) * 1e6) / 1e6);
  return out;
}

/** Default grid: windows 0.25–0.75 step 0.05, bandwidths 0.05–0.25 step 0.02 (fractions of n). */
export const DEFAULT_SENSITIVITY_WINDOWS = steps(0.25, 0.75, 0.05);
export const DEFAULT_SENSITIVITY_BANDWIDTHS = steps(0.05, 0.25, 0.02);

export interface SensitivityResult {
  windows: number[];
  /** null when the detrending has no bandwidth (one row, the chosen detrending) */
  bandwidths: number[] | null;
  indicators: Partial<Record<IndicatorName, { tau: (number | null)[][]; positiveShare: number | null }>>;
}

/**
 * Kendall tau of each indicator for every (bandwidth, window) pair: tau[b][w]; positiveShare = share
 * of defined cells with tau > 0. The detrending is done once per bandwidth and reused across windows.
 * Cost O(B·(n log n + W·n log n)). Source: the robustness check of Dakos et al. (2012), PLoS ONE 7,
 * e41010, Sec. "Sensitivity analysis" (from memory).
 */
export function sensitivityGrid(
  x: Float64Array,
  raw: Float64Array,
  opts: {
    detrend: DetrendMethod;
    movingAverageWidth: number;
    bandwidth: number;
    indicators: IndicatorName[];
    dt: number;
    /** as settings `maxEvaluatedWindows`: per-window indicators are evaluated at no more windows than this */
    maxEvaluatedWindows?: number;
    windows?: number[];
    bandwidths?: number[];
  },
): SensitivityResult {
  const windows = opts.windows ?? DEFAULT_SENSITIVITY_WINDOWS;
  const bandwidths = opts.detrend === 'gaussian' || opts.detrend === 'local-linear' ? (opts.bandwidths ?? DEFAULT_SENSITIVITY_BANDWIDTHS) : null;
  const rows = bandwidths ?? [opts.bandwidth];
  const cells: Partial<Record<IndicatorName, (number | null)[][]>> = {};
  for (const name of opts.indicators) cells[name] = [];
  for (const bw of rows) {
    const d = detrend(x, opts.detrend, { bandwidthPoints: bw * x.length, movingAverageWidth: opts.movingAverageWidth });
    const n = d.residual.length;
    const rawPart = raw.subarray(d.offset);
    const row: Partial<Record<IndicatorName, (number | null)[]>> = {};
    for (const name of opts.indicators) row[name] = [];
    for (const win of windows) {
      const w = Math.round(win * n);
      if (w < MIN_WINDOW_POINTS) {
        for (const name of opts.indicators) row[name]!.push(null);
        continue;
      }
      const rawMean = needsRawMean(opts.indicators) ? windowMoments(rawPart, w).mean : undefined;
      const stride = opts.maxEvaluatedWindows ? evaluationStride(n - w + 1, opts.maxEvaluatedWindows) : 1;
      const ind = rollingIndicators(d.residual, w, opts.indicators, { rawMean, dt: opts.dt, stride });
      const trends = indicatorTrends(ind);
      for (const name of opts.indicators) {
        const tau = trends[name]!.tau;
        row[name]!.push(Number.isFinite(tau) ? tau : null);
      }
    }
    for (const name of opts.indicators) cells[name]!.push(row[name]!);
  }
  const indicators: SensitivityResult['indicators'] = {};
  for (const name of opts.indicators) {
    const flat = cells[name]!.flat().filter((v): v is number => v !== null);
    indicators[name] = {
      tau: cells[name]!,
      positiveShare: flat.length ? flat.filter((v) => v > 0).length / flat.length : null,
    };
  }
  return { windows, bandwidths, indicators };
}
