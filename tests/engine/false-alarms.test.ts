import { describe, expect, it } from 'vitest';
import { DAY, ar1, rejectionCounts, studentT } from './null-models';

// False alarms at the nominal level on nulls that used to fool the test (issue 13). Bounds: rejectionCounts
// (central 99.9% of Binomial(R, 0.05): for R = 300 that is [4, 29], as scipy.stats.binom.ppf(0.0005 and 0.9995, 300,
// 0.05) also gives). Measured while writing (400 replicates, other seeds):
// gaps ac1 18/400, variance 27/400; Student-t ac1 21/400, variance 21/400 (before: ac1 ≈ 44% with gaps).
describe('false alarms at the nominal rate', () => {
  // Stationary AR(1), φ = 0.3, 400 daily points; in the second half runs of 1–3 missing days start at each day with
  // probability 0.085, about 14–17% of it missing, filled by linear interpolation (maxGap 3). Interpolated points
  // are smoother than data; the surrogates carry the same mask and interpolation, so the test stays at 5%.
  it('AR(1) with short interpolated gaps in the second half', async () => {
    const n = 400;
    const { counts, lo, hi } = await rejectionCounts(300, ['variance', 'ac1', 'recovery'], (rng, r) => {
      const value = ar1(n, 0.3, 31337, r);
      for (let i = n / 2; i < n - 4; i++) {
        if (rng.uniform() >= 0.085) continue;
        const len = 1 + Math.floor(3 * rng.uniform());
        value.fill(Number.NaN, i, i + len);
        i += len;
      }
      return { time: Float64Array.from({ length: n }, (_, i) => Date.UTC(2020, 0, 1) + i * DAY), value };
    });
    expect([lo, hi]).toEqual([4, 29]);
    for (const [k, c] of Object.entries(counts)) {
      expect(c, k).toBeGreaterThanOrEqual(lo);
      expect(c, k).toBeLessThanOrEqual(hi);
    }
  });

  // AR(1), φ = 0.5, with heavy-tailed Student-t (3 degrees of freedom) innovations, 100 burn-in steps; the AR(1)
  // surrogates are Gaussian, so this checks that the rank-based trend test does not depend on the tails.
  it('AR(1) with Student-t innovations', async () => {
    const n = 400;
    const { counts, lo, hi } = await rejectionCounts(300, ['variance', 'ac1', 'recovery'], (rng) => {
      const value = new Float64Array(n);
      let x = 0;
      for (let i = -100; i < n; i++) {
        x = 0.5 * x + studentT(rng, 3);
        if (i >= 0) value[i] = x;
      }
      return { time: Float64Array.from({ length: n }, (_, i) => i), value, timeKind: 'numeric' };
    });
    for (const [k, c] of Object.entries(counts)) {
      expect(c, k).toBeGreaterThanOrEqual(lo);
      expect(c, k).toBeLessThanOrEqual(hi);
    }
  });
});
