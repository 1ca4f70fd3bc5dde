import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/lib/engine/analyze';
import { AnalysisInputError } from '@/lib/engine/errors';
import { prepareSeries } from '@/lib/engine/prepare';
import { sensitivityGrid, DEFAULT_SENSITIVITY_BANDWIDTHS, DEFAULT_SENSITIVITY_WINDOWS } from '@/lib/engine/sensitivity';
import { DEFAULT_INDICATORS } from '@/lib/engine/indicators';
import { analysisSettingsSchema, MAX_EVALUATED_WINDOWS } from '@/lib/engine/settings';

const DAY = 86_400_000;
const base = { maxGap: 3, gapPolicy: 'error' as const, span: null, logTransform: false, seasonal: 'none' as const, samplingChange: 'start-after' as const };

describe('settings', () => {
  it('parse({}) gives the engine defaults (the command line contract)', () => {
    expect(analysisSettingsSchema.parse({})).toEqual({
      detrend: 'local-linear',
      bandwidth: 0.1,
      movingAverageWidth: 11,
      window: 0.5,
      indicators: [...DEFAULT_INDICATORS],
      maxEvaluatedWindows: MAX_EVALUATED_WINDOWS,
      surrogates: 0,
      surrogateMethod: 'ar1',
      seed: 1,
      seasonal: 'none',
      logTransform: false,
      maxGap: 3,
      gapPolicy: 'error',
      span: null,
      minCoverage: 0.8,
      samplingChange: 'start-after',
      shiftDetection: 'on',
      sensitivity: false,
    });
  });
  it('reads extents (fraction, points, ISO 8601 duration) and upgrades the legacy spanPoints', () => {
    const s = analysisSettingsSchema.parse({ window: 'P90D', bandwidth: '30 points', span: 'P2Y' });
    expect([s.window, s.bandwidth, s.span]).toEqual(['P90D', '30 points', 'P2Y']);
    expect(analysisSettingsSchema.parse({ spanPoints: 200 }).span).toBe('200 points');
    expect(analysisSettingsSchema.parse({ spanPoints: null }).span).toBeNull();
    expect('spanPoints' in analysisSettingsSchema.parse({ spanPoints: 200 })).toBe(false);
    expect(analysisSettingsSchema.safeParse({ window: 'ninety days' }).success).toBe(false);
    expect(analysisSettingsSchema.safeParse({ minCoverage: 0 }).success).toBe(false);
  });
  it('rejects an even moving-average width and a window above 1', () => {
    expect(analysisSettingsSchema.safeParse({ movingAverageWidth: 10 }).success).toBe(false);
    expect(analysisSettingsSchema.safeParse({ window: 1.5 }).success).toBe(false);
  });
});

// Common practice (no published source): block averaging onto the sampling grid and linear
// interpolation of short gaps; the expected numbers below are worked by hand.
describe('preparation', () => {
  it('averages observations into bins of the sampling interval; an empty bin is a gap that is filled linearly', () => {
    const t0 = Date.UTC(2021, 0, 1);
    // daily data with two readings on day 2 (averaged) and day 4 missing
    const time = Float64Array.from([0, 1, 1.2, 2, 4, 5, 6, 7, 8, 9].map((d) => t0 + d * DAY));
    const value = Float64Array.from([1, 2, 4, 4, 6, 7, 8, 9, 10, 11]);
    const p = prepareSeries({ time, value, intervalMs: DAY }, base);
    expect(Array.from(p.value)).toEqual([1, 3, 4, 5, 6, 7, 8, 9, 10, 11]);
    expect(p.quality.binnedBins).toBe(1);
    expect(p.quality.filledPoints).toBe(1);
    expect(p.quality.gaps).toEqual([{ from: t0 + 3 * DAY, to: t0 + 3 * DAY, points: 1, filled: true }]);
  });

  it('names the instants of a gap longer than maxGap', () => {
    const t0 = Date.UTC(2021, 0, 1);
    const days = [0, 1, 2, 3, 9, 10, 11, 12, 13, 14];
    const time = Float64Array.from(days.map((d) => t0 + d * DAY));
    const value = Float64Array.from(days.map((d) => d));
    expect(() => prepareSeries({ time, value, intervalMs: DAY }, base)).toThrow(AnalysisInputError);
    expect(() => prepareSeries({ time, value, intervalMs: DAY }, base)).toThrow(
      'gap of 5 missing points from 2021-01-05T00:00:00.000Z to 2021-01-09T00:00:00.000Z is longer than maxGap = 3',
    );
    const p = prepareSeries({ time, value, intervalMs: DAY }, { ...base, gapPolicy: 'latest-stretch' });
    expect(Array.from(p.value)).toEqual([9, 10, 11, 12, 13, 14]);
    expect(p.quality.droppedBeforeStretch).toBe(9);
  });

  it('keeps only the trailing span, so an old gap does not stop the analysis', () => {
    const value = Float64Array.from({ length: 50 }, (_, i) => (i === 5 || i === 6 || i === 7 || i === 8 ? Number.NaN : i));
    const time = Float64Array.from({ length: 50 }, (_, i) => i);
    const p = prepareSeries({ time, value, timeKind: 'numeric' }, { ...base, span: '30 points' });
    expect(p.value.length).toBe(30);
    expect(p.value[0]).toBe(20);
    expect(p.quality.droppedBeforeSpan).toBe(20);
  });

  it('log transform errors on a non-positive value, naming its instant', () => {
    const time = Float64Array.from({ length: 10 }, (_, i) => Date.UTC(2020, 0, 1 + i));
    const value = Float64Array.from({ length: 10 }, (_, i) => (i === 4 ? 0 : i + 1));
    expect(() => prepareSeries({ time, value }, { ...base, logTransform: true })).toThrow('the value at 2020-01-05T00:00:00.000Z is 0');
  });

  it('puts calendar months (28–31 days apart, one missing) on the grid', () => {
    const months = Array.from({ length: 48 }, (_, i) => i).filter((i) => i !== 20);
    const time = Float64Array.from(months, (i) => Date.UTC(2000 + Math.floor(i / 12), i % 12, 15));
    const p = prepareSeries({ time, value: Float64Array.from(months) }, base);
    expect(p.value.length).toBe(48);
    expect(p.quality.filledPoints).toBe(1);
    expect(p.quality.binnedBins).toBe(0);
    expect(p.value[20]).toBe(20);
    months.forEach((i, k) => expect(p.time[i]).toBe(time[k]));
  });

  it('removes a calendar-month cycle and keeps the overall level', () => {
    const time = Float64Array.from({ length: 48 }, (_, i) => Date.UTC(2000 + Math.floor(i / 12), i % 12, 15));
    const value = Float64Array.from({ length: 48 }, (_, i) => 10 + 3 * Math.sin((2 * Math.PI * (i % 12)) / 12));
    const p = prepareSeries({ time, value }, { ...base, seasonal: 'month' });
    for (const v of p.value) expect(v).toBeCloseTo(10, 12);
  });

  it('a window below 8 points is a clear error', async () => {
    const time = Float64Array.from({ length: 12 }, (_, i) => i);
    const value = Float64Array.from({ length: 12 }, (_, i) => Math.sin(i));
    await expect(runAnalysis({ time, value, timeKind: 'numeric' }, analysisSettingsSchema.parse({ window: 0.5 }))).rejects.toThrow(
      'rolling window 0.5 × 12 points = 6 points; at least 8 are needed',
    );
  });
});

// Shift detection off: the checks count points of the whole record (a detected shift would legitimately shorten it).
describe('pipeline shape', () => {
  const n = 200;
  const time = Float64Array.from({ length: n }, (_, i) => i);
  const value = Float64Array.from({ length: n }, (_, i) => 3 + Math.sin(i / 7) + ((i * 7919) % 17) / 17);

  it('indicators are null before index w − 1 and numbers after; difference detrending has n − 1 points', async () => {
    const r = await runAnalysis(
      { time, value, timeKind: 'numeric' },
      analysisSettingsSchema.parse({ detrend: 'difference', window: 0.25, shiftDetection: 'off' }),
    );
    expect(r.n).toBe(n - 1);
    expect(r.windowPoints).toBe(Math.round(0.25 * (n - 1)));
    expect(r.series.time[0]).toBe(1);
    expect(r.series.residual[0]).toBeCloseTo(value[1] - value[0], 14);
    const v = r.indicators.variance!;
    expect(v.slice(0, r.windowPoints - 1).every((x) => x === null)).toBe(true);
    expect(v.slice(r.windowPoints - 1).every((x) => typeof x === 'number')).toBe(true);
  });

  it('sensitivity: one tau per (bandwidth, window) on the default grid, and the share of positive cells', () => {
    const s = sensitivityGrid(value, value, { detrend: 'gaussian', movingAverageWidth: 11, bandwidth: 0.1, indicators: ['ac1'], dt: 1 });
    expect(s.windows).toEqual([0.25, 0.3, 0.35, 0.4, 0.45, 0.5, 0.55, 0.6, 0.65, 0.7, 0.75]);
    expect(s.bandwidths).toEqual([0.05, 0.07, 0.09, 0.11, 0.13, 0.15, 0.17, 0.19, 0.21, 0.23, 0.25]);
    expect(DEFAULT_SENSITIVITY_WINDOWS).toHaveLength(11);
    expect(DEFAULT_SENSITIVITY_BANDWIDTHS).toHaveLength(11);
    const cells = s.indicators.ac1!.tau;
    expect(cells).toHaveLength(11);
    for (const row of cells) expect(row).toHaveLength(11);
    const flat = cells.flat() as number[];
    expect(s.indicators.ac1!.positiveShare).toBeCloseTo(flat.filter((t) => t > 0).length / flat.length, 14);
  });
});
