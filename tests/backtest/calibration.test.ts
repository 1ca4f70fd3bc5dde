import { describe, expect, it } from 'vitest';
import { garwoodInterval } from '@/lib/backtest/poisson';
import { surrogateDecision, type ReplayRule } from '@/lib/backtest/replay';
import { runBacktest } from '@/lib/backtest/run';
import { simulateAr1 } from '@/lib/demo/models';
import type { TrendDirection } from '@/lib/engine/direction';
import { indicatorTrend } from '@/lib/engine/kendall';
import { rollingIndicators } from '@/lib/engine/rolling';
import { analysisSettingsSchema, type IndicatorName } from '@/lib/engine/settings';
import { prepareSurrogateJob } from '@/lib/engine/surrogates';

const DAY = 86_400_000;
const days = (n: number) => Float64Array.from({ length: n }, (_, i) => Date.UTC(2000, 0, 1) + i * DAY);

describe('the surrogate criterion holds its nominal level in the rule direction', () => {
  // R = 200 independent stationary AR(1) records (Box et al. 2015, Sec. 3.2), each tested once against N = 19
  // AR(1) surrogates at α = 0.1: P(p ≤ 0.1) = P(at most 1 of 19 surrogates reaches the observed tau) = 2/20 =
  // 0.1 when observed and surrogate taus are exchangeable (Davison & Hinkley 1997, Sec. 4.2.1, from memory).
  // Accept 8 ≤ count ≤ 33: under Binomial(200, 0.1), P(X ≤ 7) = 0.0005 and P(X ≥ 34) = 0.0015
  // (scipy.stats.binom). Early stopping must not change any decision, so the full p is checked too.
  it.each([
    ['ac1', 'rising', 31],
    ['recovery', 'falling', 32],
    ['skewness', 'two-sided', 33],
  ] as [IndicatorName, TrendDirection, number][])('%s read %s', (indicator, direction, seed) => {
    const R = 200;
    const N = 19;
    const n = 300;
    const w = 75;
    let passed = 0;
    for (let i = 0; i < R; i++) {
      const x = simulateAr1({ n, phi: 0.5, sigma: 1, seed, stream: i });
      const observed = indicatorTrend(rollingIndicators(x, w, [indicator], { dt: 1 })[indicator]!).tau;
      const job = prepareSurrogateJob(x, x, { method: 'ar1', seed: seed * 1000 + i, w, dt: 1, indicators: [indicator] });
      const quick = surrogateDecision(job, observed, direction, N, indicator, 0.1);
      const full = surrogateDecision(job, observed, direction, N, indicator, null);
      expect(quick.passed).toBe(full.p !== null && full.p <= 0.1);
      if (quick.passed) passed++;
    }
    expect(passed).toBeGreaterThanOrEqual(8);
    expect(passed).toBeLessThanOrEqual(33);
  });
});

describe('calibrated false-alarm rate of the full live procedure on AR(1) nulls', () => {
  it('agrees with the rate of the same rule replayed on independent null records', async () => {
    // The live procedure: tau ≥ 0 in the rising direction AND surrogate p ≤ 0.1 (19 surrogates), judged every
    // 25 points, persistence 1. Truth: M = 60 independent stationary AR(1) records replayed with it. Estimate:
    // the calibration on one further record (120 AR(1) surrogates, each judged against surrogates of its own
    // prefixes). The share of records with ≥ 1 alarm is binomial in each; if both estimate one rate, their
    // difference exceeds 3 standard errors (pooled) with probability < 0.3 %; the AR(1) fit of one record adds
    // a little spread, which is why 3 (not 2) standard errors are allowed.
    const n = 500;
    const t = days(n);
    const settings = analysisSettingsSchema.parse({ detrend: 'linear', window: 0.25, surrogates: 19 });
    const r: ReplayRule = {
      indicator: 'ac1',
      minTau: 0,
      maxSurrogateP: 0.1,
      levelThreshold: null,
      levelDirection: 'above',
      persistence: 1,
      quietPeriodHours: 0,
    };
    const M = 60;
    let fired = 0;
    let onsets = 0;
    let years = 0;
    for (let m = 0; m < M; m++) {
      const x = simulateAr1({ n, phi: 0.5, sigma: 1, seed: 77, stream: m });
      const res = await runBacktest({ time: t, value: x, intervalMs: DAY, settings, rule: r, tippingPoints: [], every: 25 });
      expect(res.judged.notJudgedSteps).toBe(0);
      if (res.alarms.length > 0) fired++;
      onsets += res.alarms.length;
      years += res.falseAlarms.exposureYears;
    }
    const control = simulateAr1({ n, phi: 0.5, sigma: 1, seed: 78 });
    const N = 120;
    const cal = (
      await runBacktest(
        {
          time: t,
          value: control,
          intervalMs: DAY,
          settings,
          rule: r,
          tippingPoints: [],
          every: 25,
          calibration: { surrogates: N, method: 'ar1', approaches: 20 },
        },
        { threads: 1 },
      )
    ).calibration!;
    expect(cal.notJudgedSteps).toBe(0);
    const pReplay = fired / M;
    const pooled = (fired + cal.falseAlarmRate * N) / (M + N);
    const se = Math.sqrt(pooled * (1 - pooled) * (1 / M + 1 / N));
    expect(pooled).toBeGreaterThan(0.05);
    expect(pooled).toBeLessThan(0.95);
    expect(Math.abs(pReplay - cal.falseAlarmRate)).toBeLessThanOrEqual(3 * se);
    // per year of judged time: the replayed truth lies inside the calibration's exact 95 % interval widened by
    // the truth's own Poisson spread (its Garwood interval must overlap the calibration's)
    const truth = onsets / years;
    expect(cal.falseAlarmsPerYear).not.toBeNull();
    const [lo, hi] = cal.falseAlarmsPerYearInterval!;
    expect(lo).toBeLessThanOrEqual(cal.falseAlarmsPerYear!);
    expect(hi).toBeGreaterThanOrEqual(cal.falseAlarmsPerYear!);
    const [tlo, thi] = garwoodInterval(onsets, years)!;
    expect(tlo).toBeLessThanOrEqual(hi);
    expect(thi).toBeGreaterThanOrEqual(lo);
    expect(truth).toBeGreaterThan(0);
  }, 120_000);
});
