import { describe, expect, it } from 'vitest';
import { runAnalysis } from '@/lib/engine/analyze';
import { RandomStream } from '@/lib/engine/random';
import { analysisSettingsSchema } from '@/lib/engine/settings';

// Source: Gillespie (1996), "Exact numerical simulation of the Ornstein–Uhlenbeck process and its
// integral", Phys. Rev. E 54, 2084–2091: for dX = −λX dt + σ dW sampled every Δt,
// X(t+Δt) = X(t) e^{−λΔt} + √(σ²/(2λ)·(1 − e^{−2λΔt})) N(0,1), so the samples are AR(1) with lag-1
// autocorrelation e^{−λΔt} and stationary variance σ²/(2λ). Tolerances are 4 standard errors from the
// AR(1) large-sample formulas (Bartlett: SE(r1) ≈ √((1−φ²)/n); SE(s²) ≈ s²√(2(1+φ²)/((1−φ²)n)),
// Box, Jenkins, Reinsel & Ljung (2015), Ch. 2 — from memory).
describe('Ornstein–Uhlenbeck / AR(1) facts on a long exact simulation', () => {
  const lambda = 0.5;
  const sigma = 0.8;
  const dt = 0.2;
  const n = 100_000;
  const phi = Math.exp(-lambda * dt);
  const stationaryVar = (sigma * sigma) / (2 * lambda);

  function simulate(seed: number): Float64Array {
    const rng = new RandomStream(seed, 0);
    const sd = Math.sqrt(stationaryVar * (1 - phi * phi));
    const x = new Float64Array(n);
    x[0] = Math.sqrt(stationaryVar) * rng.normal();
    for (let i = 1; i < n; i++) x[i] = x[i - 1] * phi + sd * rng.normal();
    return x;
  }

  it('lag-1 autocorrelation ≈ e^{−λΔt}, variance ≈ σ²/(2λ), recovery ≈ λ (window = whole record)', async () => {
    const value = simulate(42);
    const time = Float64Array.from({ length: n }, (_, i) => i * dt);
    // Shift detection off: these are facts about the whole record as one window (a detected shift would
    // legitimately shorten the stretch).
    const settings = analysisSettingsSchema.parse({ detrend: 'none', window: 1, indicators: ['variance', 'ac1', 'recovery'], shiftDetection: 'off' });
    const r = await runAnalysis({ time, value, timeKind: 'numeric' }, settings);
    expect(r.dt).toBeCloseTo(dt, 12);
    const last = (name: 'variance' | 'ac1' | 'recovery') => r.indicators[name]![n - 1]!;
    const seAc1 = Math.sqrt((1 - phi * phi) / n);
    const seVar = stationaryVar * Math.sqrt((2 * (1 + phi * phi)) / ((1 - phi * phi) * n));
    expect(Math.abs(last('ac1') - phi)).toBeLessThan(4 * seAc1);
    expect(Math.abs(last('variance') - stationaryVar)).toBeLessThan(4 * seVar);
    // recovery = −ln(r1)/Δt, so its SE is SE(r1)/(φΔt) (delta method)
    expect(Math.abs(last('recovery') - lambda)).toBeLessThan((4 * seAc1) / (phi * dt));
  });

  it('recovery is reported per day for UTC-millisecond times', async () => {
    const value = simulate(7).subarray(0, 2000);
    const day = 86_400_000;
    const time = Float64Array.from({ length: value.length }, (_, i) => Date.UTC(2020, 0, 1) + i * day * dt);
    const settings = analysisSettingsSchema.parse({ detrend: 'none', window: 1, indicators: ['ac1', 'recovery'], shiftDetection: 'off' });
    const r = await runAnalysis({ time, value }, settings);
    expect(r.rateUnit).toBe('per day');
    const a = r.indicators.ac1![value.length - 1]!;
    expect(r.indicators.recovery![value.length - 1]).toBeCloseTo(-Math.log(a) / dt, 12);
  });
});
