import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { detrend, gaussianSmooth, localLinearSmooth } from '@/lib/engine/detrend';
import { dayOfYearGroup, removeSeasonal } from '@/lib/engine/prepare';

const root = path.resolve(__dirname, '../..');

/** Direct O(n²) evaluation of the local-linear formula of Fan & Gijbels (1996), Ch. 3, summing every pair. */
function localLinearDirect(x: Float64Array, h: number): Float64Array {
  const n = x.length;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s0 = 0,
      s1 = 0,
      s2 = 0,
      t0 = 0,
      t1 = 0;
    for (let j = 0; j < n; j++) {
      const d = j - i;
      const k = Math.exp(-(d * d) / (2 * h * h));
      s0 += k;
      s1 += k * d;
      s2 += k * d * d;
      t0 += k * x[j];
      t1 += k * d * x[j];
    }
    out[i] = (s2 * t0 - s1 * t1) / (s0 * s2 - s1 * s1);
  }
  return out;
}

const maxAbs = (a: ArrayLike<number>, b: ArrayLike<number>) => {
  let m = 0;
  for (let i = 0; i < b.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
};

describe('local-linear Gaussian smoother', () => {
  // Source: fixtures/reference/local_linear_reference.json, written by tests/reference/make_local_linear_fixture.py
  // (numpy.linalg.lstsq weighted least squares per point, an independent formulation of the same estimator).
  const ref = JSON.parse(readFileSync(path.join(root, 'fixtures/reference/local_linear_reference.json'), 'utf8'));
  const x = Float64Array.from(ref.series.x as number[]);
  const n = x.length;
  for (const bw of Object.keys(ref.smoother)) {
    it(`equals numpy weighted least squares and the direct O(n²) sum at bandwidth ${bw}`, () => {
      const h = Number(bw) * n;
      const fast = localLinearSmooth(x, h);
      // values are ≈ 50; 1e-10 absolute is ~13 significant digits
      expect(maxAbs(fast, ref.smoother[bw])).toBeLessThan(1e-10);
      expect(maxAbs(fast, localLinearDirect(x, h))).toBeLessThan(1e-10);
    });
  }

  it('reproduces a straight line exactly (local-linear property), including at the ends, where Nadaraya–Watson does not', () => {
    const line = Float64Array.from({ length: 500 }, (_, i) => 1e7 + 0.25 * i);
    expect(maxAbs(localLinearSmooth(line, 50), line)).toBeLessThan(1e-7);
    expect(maxAbs(gaussianSmooth(line, 50), line)).toBeGreaterThan(1);
  });
});

describe('linear detrending at a large offset', () => {
  // Source: NIST StRD NumAcc4 (values 10000000.2, 10000000.1, …; fixtures/nist/NumAcc4.json). Subtracting 1e7 from
  // doubles in [1e7/2, 2e7] is exact (Sterbenz lemma, Higham (2002), Thm 2.5), so the same numbers without the
  // offset have the same least-squares residuals in exact arithmetic; computed without the offset, the residuals
  // are accurate to ~1e-16, so at the offset they must agree to well below the offset's ulp (1.9e-9).
  it('NumAcc4: residuals equal those of the same numbers with 1e7 taken out', () => {
    const d = JSON.parse(readFileSync(path.join(root, 'fixtures/nist/NumAcc4.json'), 'utf8'));
    const x = Float64Array.from(d.values as number[]);
    const small = Float64Array.from(x, (v) => v - 1e7);
    const opts = { bandwidthPoints: 1, movingAverageWidth: 3 };
    const big = detrend(x, 'linear', opts).residual;
    const ref = detrend(small, 'linear', opts).residual;
    expect(maxAbs(big, ref)).toBeLessThan(1e-12);
    const trend = detrend(x, 'linear', opts).trend;
    expect(
      maxAbs(
        Float64Array.from(trend, (v) => v - 1e7),
        detrend(small, 'linear', opts).trend,
      ),
    ).toBeLessThan(1e-9);
  });
});

describe('day-of-year groups', () => {
  // Hand-worked against the Gregorian calendar (ISO 8601-1:2019; leap years divisible by 4 except centuries not
  // divisible by 400): 29 February is group 59 and only it; 1 March is group 60 in every year.
  const cases: [string, number][] = [
    ['2023-01-01', 0],
    ['2023-02-28', 58],
    ['2023-03-01', 60],
    ['2023-12-31', 365],
    ['2024-02-28', 58],
    ['2024-02-29', 59],
    ['2024-03-01', 60],
    ['2024-12-31', 365],
    ['2000-02-29', 59],
    ['2000-03-01', 60],
    ['1900-03-01', 60],
    ['1900-12-31', 365],
    ['2100-03-01', 60],
  ];
  for (const [day, group] of cases) it(`${day} → ${group}`, () => expect(dayOfYearGroup(Date.parse(`${day}T12:00:00Z`))).toBe(group));

  it('a daily cycle with its own 29 February value is removed exactly across leap and common years', () => {
    const t0 = Date.UTC(2019, 0, 1);
    const n = 6 * 365 + 2;
    const time = Float64Array.from({ length: n }, (_, i) => t0 + i * 86_400_000);
    const cycle = (t: number) => (dayOfYearGroup(t) === 59 ? 40 : Math.sin((2 * Math.PI * dayOfYearGroup(t)) / 366));
    const value = Float64Array.from(time, (t) => 10 + cycle(t));
    const out = removeSeasonal(time, value, 'day-of-year', 'utc-ms');
    const mean = value.reduce((a, b) => a + b, 0) / n;
    for (const v of out) expect(v).toBeCloseTo(mean, 10);
  });
});
