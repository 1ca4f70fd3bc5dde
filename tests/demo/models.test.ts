import { describe, expect, it } from 'vitest';
import { linearRegression, sampleVariance } from 'simple-statistics';
import {
  cessiFolds,
  cessiLowBranch,
  cessiRelaxation,
  grazingEquilibrium,
  grazingEquilibriumRate,
  grazingFolds,
  simulateAr1,
  simulateCessi,
  simulateDoubleWell,
  simulateDrift,
  simulateGrazing,
  simulateSeasonal,
} from '@/lib/demo/models';

/** Sample lag-1 autocorrelation Σ(x_t − x̄)(x_{t+1} − x̄)/Σ(x_t − x̄)² (Box, Jenkins, Reinsel & Ljung 2015, Sec. 2.1.5). */
function lag1(x: Float64Array): number {
  let m = 0;
  for (const v of x) m += v;
  m /= x.length;
  let num = 0,
    den = 0;
  for (let i = 0; i < x.length; i++) {
    den += (x[i] - m) ** 2;
    if (i + 1 < x.length) num += (x[i] - m) * (x[i + 1] - m);
  }
  return num / den;
}

/** Local maxima and minima of g on a uniform grid over [a, b] (an independent scan, no calculus). */
function scanExtrema(g: (x: number) => number, a: number, b: number, steps: number): { max: number[]; min: number[] } {
  const h = (b - a) / steps;
  const max: number[] = [];
  const min: number[] = [];
  for (let i = 1; i < steps; i++) {
    const [l, c, r] = [g(a + (i - 1) * h), g(a + i * h), g(a + (i + 1) * h)];
    if (c > l && c > r) max.push(a + i * h);
    if (c < l && c < r) min.push(a + i * h);
  }
  return { max, min };
}

/** Index of the first sample past `level` in the given direction, or −1. */
const firstPast = (x: Float64Array, level: number, above: boolean) => x.findIndex((v) => (above ? v > level : v < level));

describe('determinism', () => {
  const grid = { n: 500, dt: 0.05, substeps: 5, seed: 42, stream: 3 };
  const runs: Record<string, (seed: number) => Float64Array> = {
    cessi: (seed) => simulateCessi({ ...grid, seed, mu2: 6.2, p0: 0.6, rate: 0.01, sigma: 0.05 }).values,
    grazing: (seed) => simulateGrazing({ ...grid, seed, r: 1, K: 10, h: 1, c0: 1, rate: 0.02, sigma: 0.1 }).values,
    ar1: (seed) => simulateAr1({ n: 500, phi: 0.5, sigma: 1, seed }),
    drift: (seed) => simulateDrift({ n: 500, phi: 0.5, sigma: 1, driftPerSample: 0.01, seed }),
    doubleWell: (seed) => simulateDoubleWell({ ...grid, seed, amplitude: 0.1, period: 50, sigma: 0.5, x0: -1 }),
    seasonal: (seed) =>
      simulateSeasonal({
        n: 500,
        phi: 0.5,
        sigma: 1,
        amplitude: 3,
        samplesPerCycle: 365.2425,
        phaseAtStart: 0.1,
        shortGapRate: 0.02,
        maxShortGap: 3,
        longGap: { start: 50, length: 10 },
        seed,
      }),
  };
  for (const [name, run] of Object.entries(runs)) {
    it(`${name}: the same seed gives byte-identical values, another seed other values`, () => {
      const a = run(42);
      expect(Buffer.from(run(42).buffer).equals(Buffer.from(a.buffer))).toBe(true);
      expect(Buffer.from(run(43).buffer).equals(Buffer.from(a.buffer))).toBe(false);
    });
  }
});

describe('stationary AR(1) control', () => {
  it('has sample variance σ²/(1 − φ²) and lag-1 autocorrelation φ within sampling error', () => {
    // Stationary moments of AR(1): γ0 = σ²/(1 − φ²), ρ1 = φ (Box, Jenkins, Reinsel & Ljung 2015, Sec. 3.2.4).
    // Sampling error (Bartlett's formulas, same book Sec. 2.1.6, from memory): var(γ̂0) ≈ (2γ0²/n)(1 + φ²)/(1 − φ²),
    // var(r1) ≈ (1 − φ²)/n. Tolerance: 4 standard errors.
    const n = 200_000,
      phi = 0.7,
      sigma = 1.3;
    const x = simulateAr1({ n, phi, sigma, mean: 5, seed: 7 });
    const gamma0 = (sigma * sigma) / (1 - phi * phi);
    const seVariance = gamma0 * Math.sqrt((2 / n) * ((1 + phi * phi) / (1 - phi * phi)));
    expect(Math.abs(sampleVariance(Array.from(x)) - gamma0)).toBeLessThan(4 * seVariance);
    expect(Math.abs(lag1(x) - phi)).toBeLessThan(4 * Math.sqrt((1 - phi * phi) / n));
  });

  it('rejects a non-stationary coefficient', () => {
    expect(() => simulateAr1({ n: 10, phi: 1, sigma: 1, seed: 1 })).toThrow(RangeError);
  });
});

describe("Cessi's two-box model", () => {
  const mu2 = 6.2;
  const f = (y: number) => cessiRelaxation(y, mu2);

  it('puts its folds where a plain scan of f(y) = y(1 + μ²(1 − y)²) finds its turning points', () => {
    // Saddle-node of dy/dt = p − f(y): p = f(y), f'(y) = 0 (Strogatz 1994, Nonlinear Dynamics and Chaos, Sec. 3.1).
    // Closed form y± = (2 ± √(1 − 3/μ²))/3 derived from Cessi (1994), J. Phys. Oceanogr. 24, 1911, checked here
    // against a grid scan with step 1e-6 that knows nothing of it.
    const folds = cessiFolds(mu2);
    const { max, min } = scanExtrema(f, 0, 1.5, 1_500_000);
    expect(max).toHaveLength(1);
    expect(min).toHaveLength(1);
    expect(Math.abs(max[0] - folds.rising.y)).toBeLessThan(2e-6);
    expect(Math.abs(min[0] - folds.falling.y)).toBeLessThan(2e-6);
    expect(Math.abs(f(max[0]) - folds.rising.p)).toBeLessThan(1e-10);
    expect(Math.abs(f(min[0]) - folds.falling.p)).toBeLessThan(1e-10);
    // Bistable only for μ² > 3: below it f is monotone, with no turning points at all.
    expect(scanExtrema((y) => cessiRelaxation(y, 2.5), 0, 1.5, 100_000).max).toHaveLength(0);
    expect(() => cessiFolds(2.5)).toThrow(RangeError);
  });

  it('finds the low-branch equilibrium f(y*) = p', () => {
    for (const p of [0, 0.3, 0.9, 1.2]) expect(Math.abs(f(cessiLowBranch(p, mu2)) - p)).toBeLessThan(1e-12);
    expect(() => cessiLowBranch(1.4, mu2)).toThrow(RangeError);
  });

  it('without noise, follows the low branch up to the fold and jumps after the delay of a slow passage', () => {
    // Slow passage through a saddle-node: near the fold, z = y − y− obeys dz/dt = rate·(t − t_fold) + b z² with
    // b = −f''(y−)/2 = μ²√(1 − 3/μ²); rescaled this is the Riccati equation ζ' = s + ζ², which blows up at
    // s = 2.33811 (minus the first zero of Airy's Ai, Abramowitz & Stegun Table 10.13), so the jump comes
    // Ω0·(b·rate)^(−1/3) after t_fold. Source: Haberman (1979), SIAM J. Appl. Math. 37, 69–106 (from memory).
    // The record crosses the middle of the unstable branch a little before the blow-up of the quadratic model.
    const folds = cessiFolds(mu2);
    const b = mu2 * Math.sqrt(1 - 3 / mu2);
    const middle = (folds.rising.y + folds.falling.y) / 2;
    const delays: number[] = [];
    for (const rate of [0.004, 0.0005]) {
      const dt = 0.05;
      const n = Math.ceil((folds.rising.p - 0.6) / rate / dt + 60 / (b * rate) ** (1 / 3) / dt);
      const run = simulateCessi({ n, dt, substeps: 10, mu2, p0: 0.6, rate, sigma: 0, seed: 1 });
      const fold = Math.floor(run.foldIndex);
      for (let i = 0; i <= fold; i += 50) {
        expect(run.values[i]).toBeLessThan(folds.rising.y);
        // Quasi-static well before the fold: the lag behind the equilibrium is about rate/f'(y*), small.
        if (i < 0.8 * fold) expect(Math.abs(run.values[i] - cessiLowBranch(run.forcing[i], mu2))).toBeLessThan(0.01);
      }
      const jump = firstPast(run.values, middle, true);
      const predicted = 2.33811 / (b * rate) ** (1 / 3);
      const delay = (jump - run.foldIndex) * dt;
      expect(delay / predicted).toBeGreaterThan(0.8);
      expect(delay / predicted).toBeLessThan(1.05);
      delays.push(delay);
      // After the jump it settles on the branch y > y+ of the forcing it has reached.
      expect(run.values[n - 1]).toBeGreaterThan(folds.falling.y);
      expect(Math.abs(f(run.values[n - 1]) - run.forcing[n - 1])).toBeLessThan(0.05);
    }
    // Eight times slower, twice the delay: the (rate)^(−1/3) law.
    expect(delays[1] / delays[0]).toBeGreaterThan(1.8);
    expect(delays[1] / delays[0]).toBeLessThan(2.2);
  });
});

describe("May's harvested population", () => {
  const q = { r: 1, K: 10, h: 1 };

  it('puts its folds at the turning points of the equilibrium harvest rate c(x)', () => {
    // Equilibria of May (1977), Nature 269, 471: c(x) = r(1 − x/K)(x² + h²)/x; folds where dc/dx = 0 (Strogatz 1994,
    // Sec. 3.1). Checked against a grid scan of c(x) with step 1e-6.
    const folds = grazingFolds(q);
    const { max, min } = scanExtrema((x) => grazingEquilibriumRate(x, q), 0.01, 10, 10_000_000);
    expect(max).toHaveLength(1);
    expect(min).toHaveLength(1);
    expect(Math.abs(max[0] - folds.collapse.x)).toBeLessThan(2e-6);
    expect(Math.abs(min[0] - folds.recovery.x)).toBeLessThan(2e-6);
    expect(Math.abs(grazingEquilibriumRate(max[0], q) - folds.collapse.c)).toBeLessThan(1e-10);
    // No bistability for K ≤ 3√3·h (Ludwig, Jones & Holling 1978, J. Anim. Ecol. 47, 315; from memory).
    expect(() => grazingFolds({ r: 1, K: 5, h: 1 })).toThrow(RangeError);
  });

  it('finds equilibria on both branches', () => {
    const { collapse, recovery } = grazingFolds(q);
    const c = (collapse.c + recovery.c) / 2;
    for (const branch of ['stocked', 'depleted'] as const) {
      const x = grazingEquilibrium(c, q, branch);
      expect(Math.abs(grazingEquilibriumRate(x, q) - c)).toBeLessThan(1e-9);
      expect(branch === 'stocked' ? x > collapse.x : x < recovery.x).toBe(true);
    }
  });

  it('stays on the stocked branch until the fold and collapses after it', () => {
    const { collapse, recovery } = grazingFolds(q);
    const middle = (collapse.x + recovery.x) / 2;
    for (const sigma of [0, 0.1]) {
      const dt = 0.1,
        n = 3000,
        c0 = 1;
      const rate = (collapse.c - c0) / (0.8 * (n - 1) * dt);
      const run = simulateGrazing({ ...q, n, dt, substeps: 10, c0, rate, sigma, seed: 5 });
      const fall = firstPast(run.values, middle, false);
      if (sigma === 0) {
        // Deterministic: above the fold state for every t < t_fold.
        for (let i = 0; i < Math.floor(run.foldIndex); i++) expect(run.values[i]).toBeGreaterThan(collapse.x);
      }
      expect(fall).toBeGreaterThan(run.foldIndex);
      expect(run.values[n - 1]).toBeLessThan(recovery.x);
      expect(Math.min(...run.values)).toBeGreaterThan(0);
    }
  });
});

describe('double-well energy-balance model', () => {
  /** Switches between wells counted with hysteresis: from below −0.5 to above +0.5 and back. */
  function switches(x: Float64Array): number {
    let state = Math.sign(x[0]);
    let count = 0;
    for (const v of x) {
      if (state < 0 && v > 0.5) {
        state = 1;
        count++;
      } else if (state > 0 && v < -0.5) {
        state = -1;
        count++;
      }
    }
    return count;
  }

  it('flickers between both wells under weak forcing and noise', () => {
    const x = simulateDoubleWell({ n: 4000, dt: 0.25, substeps: 10, amplitude: 0.12, period: 66, sigma: 0.5, x0: -1, seed: 8 });
    const share = (test: (v: number) => boolean) => x.filter(test).length / x.length;
    expect(share((v) => v > 0.5)).toBeGreaterThan(0.25);
    expect(share((v) => v < -0.5)).toBeGreaterThan(0.25);
    expect(switches(x)).toBeGreaterThan(10);
  });

  it('cannot tip by forcing alone below A = 2/(3√3), and tips above it', () => {
    // x − x³ + A = 0 keeps its cold root while A < max(x³ − x) on x < 0, i.e. A < 2/(3√3) ≈ 0.385
    // (the static threshold of the quartic normal form; derived here, common practice).
    const run = (amplitude: number) => simulateDoubleWell({ n: 2000, dt: 0.25, substeps: 10, amplitude, period: 100, sigma: 0, x0: -1, seed: 1 });
    expect(Math.max(...run(0.37))).toBeLessThan(0);
    expect(Math.max(...run(0.42))).toBeGreaterThan(0.5);
  });

  it('without forcing, switches at the Kramers rate', () => {
    // Kramers escape rate over the barrier of U = x⁴/4 − x²/2 with noise intensity D = σ²/2:
    // k = √(U''(±1)·|U''(0)|)/(2π)·exp(−ΔU/D) = √2/(2π)·exp(−1/(2σ²)). Kramers (1940), Physica 7, 284–304;
    // Hänggi, Talkner & Borkovec (1990), Rev. Mod. Phys. 62, 251–341 (from memory). At ΔU/D = 2 the
    // asymptotic formula carries corrections of order D/ΔU, hence the wide tolerance.
    const sigma = 0.5,
      dt = 0.25,
      n = 200_001;
    const x = simulateDoubleWell({ n, dt, substeps: 25, amplitude: 0, period: 1, sigma, x0: -1, seed: 3 });
    const rate = switches(x) / ((n - 1) * dt);
    const kramers = (Math.SQRT2 / (2 * Math.PI)) * Math.exp(-1 / (2 * sigma * sigma));
    expect(rate / kramers).toBeGreaterThan(0.75);
    expect(rate / kramers).toBeLessThan(1.1);
  });
});

describe('seasonal series with gaps', () => {
  it('has short gaps of at most three samples, one long gap where asked, and both ends present', () => {
    const x = simulateSeasonal({
      n: 5000,
      phi: 0.7,
      sigma: 0.6,
      mean: 10,
      amplitude: 7,
      samplesPerCycle: 365.2425,
      phaseAtStart: 0,
      shortGapRate: 0.01,
      maxShortGap: 3,
      longGap: { start: 420, length: 21 },
      seed: 9,
    });
    const gaps: { start: number; length: number }[] = [];
    for (let i = 0; i < x.length; i++) {
      if (!Number.isNaN(x[i])) continue;
      const start = i;
      while (i < x.length && Number.isNaN(x[i])) i++;
      gaps.push({ start, length: i - start });
    }
    expect(Number.isNaN(x[0]) || Number.isNaN(x[x.length - 1])).toBe(false);
    expect(gaps.filter((g) => g.length > 3)).toEqual([{ start: 420, length: 21 }]);
    // About n·rate short gaps (Bernoulli trials; 3 standard deviations of 50).
    const short = gaps.filter((g) => g.length <= 3).length;
    expect(Math.abs(short - 50)).toBeLessThan(3 * Math.sqrt(50));
    expect(new Set(gaps.map((g) => g.length))).toEqual(new Set([1, 2, 3, 21]));
  });
});

describe('sensor drift', () => {
  it('adds a linear drift whose least-squares slope is recovered within its standard error', () => {
    // OLS slope of an AR(1)-error regression: var(b̂) ≈ γ0·(1 + φ)/(1 − φ)/Σ(t − t̄)² for large n
    // (Box, Jenkins, Reinsel & Ljung 2015, regression with autocorrelated errors; from memory). Fit with
    // simple-statistics' linearRegression as the independent reference. Tolerance: 4 standard errors.
    const n = 2500,
      phi = 0.5,
      sigma = 0.15,
      drift = -0.0008;
    const x = simulateDrift({ n, phi, sigma, mean: 10, driftPerSample: drift, seed: 5 });
    const { m } = linearRegression(Array.from(x, (v, t) => [t, v]));
    const gamma0 = (sigma * sigma) / (1 - phi * phi);
    const se = Math.sqrt((gamma0 * ((1 + phi) / (1 - phi))) / ((n * (n * n - 1)) / 12));
    expect(Math.abs(m - drift)).toBeLessThan(4 * se);
  });
});
