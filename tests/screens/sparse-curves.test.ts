import { describe, expect, it } from 'vitest';
import { SE_BAND_Z, thinIndicator, thinnedIndices, curvesOf } from '@/lib/analysis/curves';
import { bandKeys, chartRows } from '@/lib/analysis/chart-rows';
import { thinCurves, viewFromResult } from '@/lib/analysis/view';
import { analysisSettingsSchema, runAnalysis } from '@/lib/engine';
import { simulateAr1 } from '@/lib/demo/models';

// Indicators computed at every k-th window only must stay visible on charts thinned to any width (common practice:
// a thinned chart shows each evaluation its stretch holds; hand-checked cases).
describe('charts of indicators computed at a stride', () => {
  it('keeps the latest evaluation in each thinned stretch, and shows gaps where a stretch holds none', () => {
    const values = Array.from({ length: 30 }, (_, i) => (i % 7 === 0 ? i : null));
    // kept every 5th point: stretches (…0], (0,5], (5,10], (10,15], (15,20], (20,25], (25,29]
    const { indices } = thinnedIndices(30, 7);
    expect(indices).toEqual([0, 5, 10, 15, 20, 25, 29]);
    expect(thinIndicator(values, indices, 7)).toEqual([0, null, 7, 14, null, 21, 28]);
    // a dense indicator keeps exactly its values at the kept points, nulls included
    expect(thinIndicator(values, indices, 1)).toEqual([0, null, null, null, null, null, null]);
  });

  it('a spectral-ratio curve of a long record is drawn with its evaluations, through storage and the chart view', async () => {
    const n = 20_000;
    const value = simulateAr1({ n, phi: 0.5, sigma: 1, mean: 0, seed: 9 });
    const time = Float64Array.from({ length: n }, (_, i) => i);
    const settings = analysisSettingsSchema.parse({
      indicators: ['variance', 'spectral-ratio'],
      window: 0.5,
      detrend: 'linear',
      shiftDetection: 'off',
      maxEvaluatedWindows: 50,
    });
    const result = await runAnalysis({ time, value: Float64Array.from(value), timeKind: 'numeric' }, settings);
    expect(result.evaluatedEvery['spectral-ratio']).toBeGreaterThan(1);
    const evaluated = Array.from(result.indicators['spectral-ratio']!).filter((v) => v !== null && Number.isFinite(v)).length;
    const stored = curvesOf(result);
    const shownStored = stored.indicators['spectral-ratio'].filter((v) => v !== null).length;
    expect(shownStored).toBe(evaluated); // 2,000 stored points, fewer evaluations: each one lands in its own stretch
    const chart = thinCurves(stored, 720);
    const shownChart = chart.indicators['spectral-ratio'].filter((v) => v !== null).length;
    expect(shownChart).toBe(evaluated);
  });

  it('the restoring rate carries its ±1.96 SE band, from the same window as each drawn value, through storage, view and chart rows', async () => {
    // The SE itself is checked against statsmodels OLS in tests/engine/indicators.test.ts; here: the band is value ±
    // 1.96·SE of the window each drawn value comes from (normal 95 % interval, common practice).
    const n = 6_000;
    const value = simulateAr1({ n, phi: 0.7, sigma: 1, mean: 0, seed: 12 });
    const time = Float64Array.from({ length: n }, (_, i) => i);
    const settings = analysisSettingsSchema.parse({
      indicators: ['variance', 'restoring-rate'],
      window: 0.25,
      detrend: 'linear',
      shiftDetection: 'off',
      maxEvaluatedWindows: 60,
    });
    const result = await runAnalysis({ time, value: Float64Array.from(value), timeKind: 'numeric' }, settings);
    const rate = result.indicators['restoring-rate']!;
    const se = result.companions['restoring-rate']!.standardError;
    const stored = curvesOf(result, 500);
    expect(stored.bands?.variance).toBeUndefined();
    const band = stored.bands!['restoring-rate'];
    let checked = 0;
    stored.indicators['restoring-rate'].forEach((v, k) => {
      if (v === null) return expect(band.lower[k]).toBeNull();
      const i = Array.from(rate).findIndex((r) => r === v);
      expect(Math.abs(band.lower[k]! - (v - SE_BAND_Z * se[i]!))).toBeLessThanOrEqual(1e-12 * Math.abs(v) + 1e-15);
      expect(Math.abs(band.upper[k]! - (v + SE_BAND_Z * se[i]!))).toBeLessThanOrEqual(1e-12 * Math.abs(v) + 1e-15);
      expect(band.upper[k]!).toBeGreaterThan(band.lower[k]!);
      checked++;
    });
    expect(checked).toBeGreaterThan(40);
    const view = viewFromResult(result, settings);
    const rows = chartRows(view.curves);
    const keys = bandKeys('restoring-rate');
    const drawn = rows.filter((row) => row['restoring-rate'] !== null);
    expect(drawn.length).toBeGreaterThan(40);
    for (const row of drawn) {
      expect(row[keys.lower]!).toBeLessThan(row['restoring-rate']!);
      expect(row[keys.upper]!).toBeGreaterThan(row['restoring-rate']!);
    }
  });
});
