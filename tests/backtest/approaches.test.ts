import { describe, expect, it } from 'vitest';
import { DAY, days, rule as baseRule } from './helpers';
import { fitRestoringModel, simulateRestoring } from '@/lib/backtest/fold';
import type { ReplayRule } from '@/lib/backtest/replay';
import { runBacktest, type RocPoint } from '@/lib/backtest/run';
import { cessiFolds, simulateAr1, simulateCessi } from '@/lib/demo/models';
import { analysisSettingsSchema } from '@/lib/engine/settings';

const rule = (over: Partial<ReplayRule> = {}) => baseRule({ persistence: 2, ...over });
const n = 1000;
const t = days(n);
const settings = analysisSettingsSchema.parse({ detrend: 'gaussian', bandwidth: 0.1, window: 0.25, surrogates: 0 });
const FOLDS = cessiFolds(6.2);

/**
 * An approach to a fold: Cessi's (1994) box model (J. Phys. Oceanogr. 24, 1911–1920) with its freshwater
 * forcing ramped to reach the fold one step after the last sample, so the record ends at the tipping point.
 */
function approach(seed: number): Float64Array {
  const dt = 0.2;
  return simulateCessi({ mu2: 6.2, p0: 0.6, sigma: 0.05, n, dt, rate: (FOLDS.rising.p - 0.6) / (n * dt), substeps: 10, seed, stream: 0 }).values;
}

const at = (roc: RocPoint[], threshold: number) => roc.find((p) => Math.abs(p.threshold - threshold) < 1e-12)!;

describe('restoring-model fit', () => {
  it('recovers a restoring rate that falls towards zero, and a constant one', () => {
    // simulated from the model itself (k from 0.5 to 0.02 per step over 3,000 steps); tolerances are our own
    // (about three standard errors of the fitted rates in a few trial runs, common practice)
    const truth = { mu: 0, sigma: 1, k0: 0.5, k1: 0.02, n: 3000, logLikelihood: 0 };
    const fit = fitRestoringModel(simulateRestoring(truth, 3, 0));
    expect(fit.k0).toBeGreaterThan(0.4);
    expect(fit.k0).toBeLessThan(0.62);
    expect(fit.k1).toBeLessThan(0.08);
    const flat = fitRestoringModel(simulateAr1({ n: 3000, phi: 0.6, sigma: 1, seed: 4 }), { constant: true });
    // φ = 0.6 ⇔ k = −ln 0.6 = 0.511
    expect(Math.abs(flat.k0 + Math.log(0.6))).toBeLessThan(0.06);
  });
});

describe('ROC from simulated approaches to a fold fitted to the record (Boettiger & Hastings 2012)', () => {
  const M = 150;
  it('on an approach to a fold, hit rate exceeds the false-alarm rate', async () => {
    const r = await runBacktest(
      {
        time: t,
        value: approach(5),
        intervalMs: DAY,
        settings,
        rule: rule(),
        tippingPoints: [{ at: t[n - 1] + DAY }],
        every: 5,
        calibration: { surrogates: 10, method: 'ar1', approaches: M },
      },
      { threads: 1 },
    );
    const cal = r.calibration!;
    expect(cal.approaches.replicates).toBe(M);
    // the fit sees the slowing down: the restoring rate falls over the record
    expect(cal.approaches.foldModel.restoringRateEnd).toBeLessThan(cal.approaches.foldModel.restoringRateStart / 2);
    // If both rates were one proportion, the difference of two independent binomial shares of M = 150 has a
    // standard deviation of at most √(2·0.25/150) = 0.058; a difference of 0.25 is 4.3 of them (one-sided
    // chance < 1e-5, normal approximation).
    for (const threshold of [0.3, 0.5]) {
      const p = at(cal.roc, threshold);
      expect(p.hitRate! - p.falseAlarmRate).toBeGreaterThanOrEqual(0.25);
    }
    // both rates fall as the threshold rises
    for (let i = 1; i < cal.roc.length; i++) {
      expect(cal.roc[i].falseAlarmRate).toBeLessThanOrEqual(cal.roc[i - 1].falseAlarmRate);
      expect(cal.roc[i].hitRate!).toBeLessThanOrEqual(cal.roc[i - 1].hitRate!);
    }
  }, 60_000);

  it('on a stationary AR(1) record, hit rate and false-alarm rate agree within binomial bounds', async () => {
    // Under the null the fitted decline is only noise, so both kinds of replicate share one alarm probability up
    // to that noise. Binomial part: sd of the difference ≤ 0.058 at M = 150; the bound 0.2 is 3.5 of them
    // (two-sided chance 0.05 %), leaving room for the spread the fitted slope adds (our own margin).
    for (const seed of [3, 8]) {
      const x = simulateAr1({ n, phi: 0.5, sigma: 1, seed });
      const r = await runBacktest(
        {
          time: t,
          value: x,
          intervalMs: DAY,
          settings,
          rule: rule(),
          tippingPoints: [{ at: t[n - 1] + DAY }],
          every: 5,
          calibration: { surrogates: 10, method: 'ar1', approaches: M },
        },
        { threads: 1 },
      );
      for (const threshold of [0.3, 0.5]) {
        const p = at(r.calibration!.roc, threshold);
        expect(Math.abs(p.hitRate! - p.falseAlarmRate)).toBeLessThanOrEqual(0.2);
        // rates from simulation, not 0 or 1 from a single mark
        expect(p.falseAlarmRate).toBeGreaterThan(0);
        expect(p.falseAlarmRate).toBeLessThan(1);
      }
    }
  }, 90_000);
});

describe('a falling-direction rule (recovery rate) on approaches to a fold', () => {
  it('is open at the tipping point on most approaches; read as rising it is open on none', async () => {
    // Power check on 20 independent approaches. Acceptance: at least 15 open at the tipping point. If the power
    // were 0.9, fewer than 15 of 20 happens with probability 0.011 (binomial, scipy.stats.binom.cdf(14, 20, 0.9)).
    let open = 0;
    let risingOpen = 0;
    for (let seed = 100; seed < 120; seed++) {
      const x = approach(seed);
      const base = { time: t, value: x, intervalMs: DAY, settings, tippingPoints: [{ at: t[n - 1] + DAY }], every: 5 };
      const falling = await runBacktest({ ...base, rule: rule({ indicator: 'recovery', minTau: 0.5 }) });
      expect(falling.direction).toBe('falling');
      if (falling.tippingPoints[0].openAtTippingPoint) open++;
      const rising = await runBacktest({ ...base, rule: rule({ indicator: 'recovery', minTau: 0.5, direction: 'rising' }) });
      if (rising.tippingPoints[0].openAtTippingPoint) risingOpen++;
    }
    expect(open).toBeGreaterThanOrEqual(15);
    expect(risingOpen).toBe(0);
  }, 90_000);
});
