import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/lib/engine/analyze';
import { RandomStream } from '@/lib/engine/random';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { binomCdf } from './binomial';

describe('surrogate significance calibration', () => {
  // Under the null (a stationary AR(1) series, no approach to any tipping point), a valid test rejects at
  // p ≤ 0.05 in 5% of series. With 99 surrogates, p = (1 + #{τ_s ≥ τ})/100 ≤ 0.05 exactly when at most 4
  // surrogates reach τ, which has probability 5/100 under exchangeability (Davison & Hinkley 1997,
  // Sec. 4.2.1, from memory). The rejection count over 300 series must lie inside the central 99.8% of
  // Binomial(300, 0.05) (common practice). Seeded, so deterministic, yet a miscalibrated test fails it. Shift
  // detection is off: this checks the surrogate test alone (a detected shift would legitimately shorten the stretch).
  it('stationary AR(1) series: p ≤ 0.05 at a rate consistent with 5%', async () => {
    const series = 300;
    const n = 200;
    const settings = analysisSettingsSchema.parse({
      detrend: 'linear',
      shiftDetection: 'off',
      window: 0.5,
      indicators: ['variance', 'ac1'],
      surrogates: 99,
      seed: 11,
    });
    const time = Float64Array.from({ length: n }, (_, i) => i);
    const rejections = { variance: 0, ac1: 0 };
    for (let s = 0; s < series; s++) {
      const rng = new RandomStream(2024, s);
      const phi = 0.3 + 0.4 * rng.uniform();
      const value = new Float64Array(n);
      value[0] = rng.normal() / Math.sqrt(1 - phi * phi);
      for (let i = 1; i < n; i++) value[i] = phi * value[i - 1] + rng.normal();
      const r = await runAnalysis({ time, value, timeKind: 'numeric' }, { ...settings, seed: 1000 + s }, { parallel: false });
      for (const name of ['variance', 'ac1'] as const) if (r.significance[name]!.p! <= 0.05) rejections[name]++;
    }
    let lo = 0;
    while (binomCdf(lo, series, 0.05) < 0.001) lo++;
    let hi = lo;
    while (binomCdf(hi, series, 0.05) < 0.999) hi++;
    for (const name of ['variance', 'ac1'] as const) {
      expect(rejections[name], name).toBeGreaterThanOrEqual(lo);
      expect(rejections[name], name).toBeLessThanOrEqual(hi);
    }
  });

  // Model: the saddle-node (fold) normal form dx = (r + x²) dt + σ dW, stable state x* = −√(−r) with
  // restoring rate 2√(−r) that falls to zero as r → 0⁻ (Strogatz (1994), Nonlinear Dynamics and Chaos,
  // Sec. 3.1, from memory); slowing down before a fold raises lag-1 autocorrelation (Wissel (1984),
  // Oecologia 65, 101–107; Scheffer et al. (2009), Nature 461, 53–59, from memory). r ramps slowly from
  // −1 to −0.04, stopping short of the fold; Euler–Maruyama with step 0.01, sampled every 0.5. The
  // bandwidth (0.05) is narrow enough for the smoother to follow the curving equilibrium x* = −√(−r);
  // AR(1)-surrogate tests of rolling indicators are known to have modest power, so "most" is ≥ 60%.
  // Recovery = −ln(ac1)/Δt falls as ac1 rises, so judged in its own (falling) direction it must be significant
  // exactly when ac1 is (before directions, it was tested upwards and got p ≈ 1).
  it('slow approach to a fold: ac1 rising and recovery falling are significant in most runs, together', async () => {
    const runs = 30;
    const samples = 1000;
    const every = 50;
    const h = 0.01;
    const sigma = 0.03;
    const settings = analysisSettingsSchema.parse({ indicators: ['ac1', 'recovery'], surrogates: 99, window: 0.5, bandwidth: 0.05 });
    const time = Float64Array.from({ length: samples }, (_, i) => i * every * h);
    let significant = 0;
    for (let k = 0; k < runs; k++) {
      const rng = new RandomStream(77, k);
      const value = new Float64Array(samples);
      let x = -1;
      const steps = samples * every;
      for (let s = 0; s < steps; s++) {
        const r = -1 + 0.96 * (s / steps);
        x += (r + x * x) * h + sigma * Math.sqrt(h) * rng.normal();
        if (s % every === every - 1) value[(s - every + 1) / every] = x;
      }
      expect(Math.max(...value)).toBeLessThan(0);
      const res = await runAnalysis({ time, value, timeKind: 'numeric' }, { ...settings, seed: k + 1 }, { parallel: false });
      if (res.significance.ac1!.p! <= 0.05) significant++;
      expect(res.significance.recovery!.direction).toBe('falling');
      expect(res.significance.recovery!.p! <= 0.05, `run ${k}`).toBe(res.significance.ac1!.p! <= 0.05);
    }
    expect(significant / runs).toBeGreaterThanOrEqual(0.6);
  });
});
