import { describe, expect, it } from 'vitest';
import { DAY, days, rule } from './helpers';
import { runBacktest } from '@/lib/backtest/run';
import { alarmOnsets, pointInTimeResiduals, replayEvidence, replayGeometry, indicatorStream, stridedEvidence } from '@/lib/backtest/replay';
import { simulateAr1 } from '@/lib/demo/models';
import { buildDemoScenario } from '@/lib/demo/scenario';
import { runAnalysis } from '@/lib/engine/analyze';
import { detrend, gaussianSmooth, linearFit, movingAverage } from '@/lib/engine/detrend';
import { indicatorTrend } from '@/lib/engine/kendall';
import { rollingIndicators } from '@/lib/engine/rolling';
import { analysisSettingsSchema } from '@/lib/engine/settings';

describe('point-in-time residuals equal the engine detrending of each prefix at its last point', () => {
  const x = simulateAr1({ n: 700, phi: 0.6, sigma: 1, mean: 50, seed: 3 }).map((v, i) => v + 0.01 * i);
  const ends = [0, 1, 5, 99, 400, 699];
  const check = (residual: Float64Array, trendOfPrefix: (p: Float64Array) => Float64Array) => {
    for (const i of ends) {
      const prefix = x.subarray(0, i + 1);
      const expected = x[i] - trendOfPrefix(prefix)[i];
      expect(Math.abs(residual[i] - expected)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(x[i])));
    }
  };
  it('gaussian (FFT path, h = 70) and direct sums (h = 3)', () => {
    for (const h of [70, 3]) check(pointInTimeResiduals(x, { detrend: 'gaussian', h, movingAverageWidth: 11 }), (p) => gaussianSmooth(p, h));
  });
  it('local-linear (FFT path, h = 70; direct sums, h = 3; a bandwidth wider than the record, h = 900): the engine detrend of each prefix', () => {
    // the reference that ties the replay to the live analysis: detrend(prefix, 'local-linear') as runAnalysis calls it
    for (const h of [70, 3, 900]) {
      check(
        pointInTimeResiduals(x, { detrend: 'local-linear', h, movingAverageWidth: 11 }),
        (p) => detrend(p, 'local-linear', { bandwidthPoints: h, movingAverageWidth: 11 }).trend,
      );
    }
  });
  it('local-linear equals a direct O(n·L) evaluation of the one-sided fit at every point', () => {
    // m̂_i = (S2·T0 − S1·T1)/(S0·S2 − S1²), S_k = Σ K(d) d^k, T_k = Σ K(d) d^k x_{i−d}, d = 0..min(i, L), K(d) = exp(−d²/2h²):
    // the local-linear estimate at the boundary point i (Fan & Gijbels 1996, Ch. 3, from memory), summed term by term
    for (const h of [70, 3]) {
      const r = pointInTimeResiduals(x, { detrend: 'local-linear', h, movingAverageWidth: 11 });
      const L = Math.ceil(8.86 * h);
      for (let i = 0; i < x.length; i += 7) {
        let s0 = 0,
          s1 = 0,
          s2 = 0,
          t0 = 0,
          t1 = 0;
        for (let d = 0; d <= Math.min(i, L); d++) {
          const k = Math.exp(-(d * d) / (2 * h * h));
          s0 += k;
          s1 += k * d;
          s2 += k * d * d;
          t0 += k * x[i - d];
          t1 += k * d * x[i - d];
        }
        const det = s0 * s2 - s1 * s1;
        const trend = det > 0 ? (s2 * t0 - s1 * t1) / det : t0 / s0;
        expect(Math.abs(r[i] - (x[i] - trend))).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(x[i])));
      }
    }
  });
  it('moving average', () => check(pointInTimeResiduals(x, { detrend: 'moving-average', h: 1, movingAverageWidth: 11 }), (p) => movingAverage(p, 11)));
  it('linear', () =>
    check(pointInTimeResiduals(x, { detrend: 'linear', h: 1, movingAverageWidth: 11 }), (p) => {
      if (p.length < 2) return Float64Array.from(p);
      const { intercept, slope } = linearFit(
        Float64Array.from(p, (_, k) => k),
        p,
      );
      return Float64Array.from(p, (_, k) => intercept + slope * k);
    }));
});

describe('replay evidence equals a full recomputation at each judged instant', () => {
  it('growing record and trailing span (detrend none)', () => {
    const x = simulateAr1({ n: 900, phi: 0.5, sigma: 1, seed: 4 });
    const t = days(900);
    for (const spanPoints of [null, 400]) {
      const settings = analysisSettingsSchema.parse({ detrend: 'none', window: 0.25, span: spanPoints === null ? null : `${spanPoints} points` });
      const g = replayGeometry(settings, 900, DAY, 7);
      const stream = indicatorStream(x, x, 'variance', g);
      const ev = replayEvidence(stream, t, g);
      expect(ev.index.length).toBeGreaterThan(50);
      for (let s = 0; s < ev.index.length; s += 9) {
        const k = ev.index[s];
        const from = spanPoints === null ? 0 : Math.max(0, k + 1 - spanPoints);
        // full recomputation: rolling variance of the available (trailing) record, then Kendall tau of it
        const full = rollingIndicators(x.slice(from, k + 1), g.w, ['variance'], { dt: 1 }).variance;
        const ref = indicatorTrend(full);
        expect(Math.abs(ev.tau[s] - ref.tau)).toBeLessThanOrEqual(1e-9);
        expect(Math.abs(ev.p[s] - ref.p)).toBeLessThanOrEqual(1e-9);
      }
    }
  });
});

describe('per-window indicators are replayed at the stride the live analysis uses', () => {
  // Source of the expected values: the live analysis itself (runAnalysis, lib/engine/analyze.ts) on each prefix the
  // scheduler would have seen, with the same settings; the replay must judge the windows it evaluates, no others.
  const n = 640;
  const x = simulateAr1({ n, phi: 0.4, sigma: 1, seed: 11 }).map((v, i) => v * (1 + i / 400));
  const t = days(n);
  const every = 16;
  for (const { indicator, span } of [
    { indicator: 'restoring-rate', span: null },
    { indicator: 'dfa', span: '300 points' },
  ] as const) {
    it(`${indicator}${span ? `, trailing span ${span}` : ''}: tau and the alarm onset equal the live analysis of every prefix`, async () => {
      const settings = analysisSettingsSchema.parse({
        detrend: 'none',
        window: '64 points',
        span,
        indicators: [indicator],
        surrogates: 0,
        shiftDetection: 'off',
        sensitivity: false,
        maxEvaluatedWindows: 30,
      });
      const g = replayGeometry(settings, n, DAY, every);
      const ev = stridedEvidence(x, t, indicator, g);
      expect(ev.index.length).toBeGreaterThan(20);
      const liveTau: number[] = [];
      for (let s = 0; s < ev.index.length; s++) {
        const k = ev.index[s];
        const live = await runAnalysis({ time: t.subarray(0, k + 1), value: x.subarray(0, k + 1), intervalMs: DAY }, settings);
        // the stride really thins the windows once the record holds more than 30 of them
        if (k + 1 - g.w + 1 > 60) expect(live.evaluatedEvery[indicator]).toBeGreaterThan(1);
        const tau = live.kendall[indicator]!.tau!;
        liveTau.push(tau);
        expect(Math.abs(ev.tau[s] - tau)).toBeLessThanOrEqual(1e-12);
      }
      // the first cycle at which a live rule (tau ≥ median of the taus seen, persistence 1) fires is the replay's onset
      const threshold = [...liveTau].sort((a, b) => a - b)[Math.floor(liveTau.length / 2)];
      const liveFirst = liveTau.findIndex((tau) => tau >= threshold);
      const onsets = alarmOnsets(ev, rule({ indicator, minTau: threshold, persistence: 1 }), threshold).onsets;
      expect(onsets[0].time).toBe(t[ev.index[liveFirst]]);
    });
  }
});

describe('backtest on a record from a model with a known fold', () => {
  it('the rule warns before the marked tipping point of the demo Cessi (1994) box-model series', async () => {
    const series = buildDemoScenario(new Date(Date.UTC(2025, 0, 1))).find((s) => s.input.slug === 'veskary-salinity-contrast')!;
    const mark = series.marks[0];
    const result = await runBacktest({
      time: series.times,
      value: series.values,
      intervalMs: series.input.intervalMs,
      settings: { ...series.input.settings, surrogates: 0 },
      rule: rule({ minTau: 0.5 }),
      tippingPoints: [{ at: mark.at, note: mark.note }],
      every: 5,
    });
    const outcome = result.tippingPoints[0];
    expect(outcome.firstWarningAt).not.toBeNull();
    expect(outcome.firstWarningAt!).toBeLessThan(mark.at);
    expect(outcome.leadTimeMs!).toBeGreaterThan(0);
    // a warning counts only within the horizon (default: one window) before the mark
    expect(outcome.leadTimeMs!).toBeLessThanOrEqual(result.horizonMs);
    expect(result.horizonMs).toBe(result.geometry.windowPoints * series.input.intervalMs!);
    expect(outcome.firingTau!).toBeGreaterThanOrEqual(0.5);
  });
});
