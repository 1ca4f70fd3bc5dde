import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/lib/engine/analyze';
import { INDICATOR_DIRECTIONS, normalPInDirection, orientedTau, trendDirectionOf } from '@/lib/engine/direction';
import { RandomStream } from '@/lib/engine/random';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { surrogatePValue } from '@/lib/engine/surrogates';

describe('directions', () => {
  it('each indicator has its direction under slowing down; rules say "either" for two-sided', () => {
    expect(INDICATOR_DIRECTIONS).toEqual({
      variance: 'rising',
      sd: 'rising',
      cv: 'rising',
      ac1: 'rising',
      recovery: 'falling',
      skewness: 'two-sided',
      kurtosis: 'two-sided',
      // as issue 17 defines them, each with its source in its file under lib/engine/indicators
      'restoring-rate': 'rising',
      'spectral-ratio': 'rising',
      ch: 'rising',
      dfa: 'rising',
      bimodality: 'rising',
      'potential-wells': 'rising',
    });
    expect(trendDirectionOf('either')).toBe('two-sided');
    expect(trendDirectionOf('falling')).toBe('falling');
    expect(orientedTau(-0.4, 'falling')).toBe(0.4);
    expect(orientedTau(-0.4, 'two-sided')).toBe(0.4);
    expect(orientedTau(Number.NaN, 'rising')).toBeNaN();
  });

  // Source: Davison & Hinkley (1997), Bootstrap Methods and their Application, Sec. 4.2.1 (Monte Carlo p, from
  // memory): p = (1 + #{T* at least as extreme})/(N + 1); counted by hand for the taus below.
  it('surrogate p counts surrogates at least as extreme in the direction', () => {
    const taus = Float64Array.from([-0.9, -0.5, -0.1, 0.2, 0.6, Number.NaN]);
    expect(surrogatePValue(0.2, taus, 'rising')).toEqual({ p: 3 / 6, count: 5 });
    expect(surrogatePValue(-0.5, taus, 'falling')).toEqual({ p: 3 / 6, count: 5 });
    expect(surrogatePValue(-0.6, taus, 'two-sided')).toEqual({ p: 3 / 6, count: 5 });
    expect(surrogatePValue(-0.95, taus, 'falling')).toEqual({ p: 1 / 6, count: 5 });
  });

  // Standard normal tail values, Abramowitz & Stegun (1964) Table 26.1: P(Z ≥ 1.959964) = 0.025.
  it('normal p in a direction: one tail for rising/falling, both for two-sided', () => {
    expect(normalPInDirection(1.959963984540054, 'rising')).toBeCloseTo(0.025, 12);
    expect(normalPInDirection(1.959963984540054, 'falling')).toBeCloseTo(0.975, 12);
    expect(normalPInDirection(-1.959963984540054, 'two-sided')).toBeCloseTo(0.05, 12);
  });

  // The case of the issue: memory rising from φ = 0.2 to 0.97 makes ac1 rise and the recovery rate fall; both
  // must be significant in their own direction (before, recovery was tested upwards and got p = 1).
  it('rising memory: ac1 and recovery both significant, each in its direction', async () => {
    const n = 600;
    const rng = new RandomStream(4242, 0);
    const value = new Float64Array(n);
    let x = 0;
    for (let i = 0; i < n; i++) value[i] = x = (0.2 + (0.77 * i) / (n - 1)) * x + rng.normal();
    const time = Float64Array.from({ length: n }, (_, i) => i);
    // shift detection off: this checks directions on the whole record
    const settings = analysisSettingsSchema.parse({ detrend: 'linear', indicators: ['ac1', 'recovery'], surrogates: 99, seed: 3, shiftDetection: 'off' });
    const r = await runAnalysis({ time, value, timeKind: 'numeric' }, settings, { parallel: false });
    expect(r.kendall.ac1!.tau!).toBeGreaterThan(0.5);
    expect(r.kendall.recovery!.tau!).toBeLessThan(-0.5);
    expect(r.significance.ac1).toMatchObject({ direction: 'rising', p: 0.01 });
    expect(r.significance.recovery).toMatchObject({ direction: 'falling', p: 0.01 });
    expect(r.kendall.recovery!.p!).toBeLessThan(0.01);
  });
});
