import { readFileSync } from 'node:fs';
import path from 'node:path';
import { binomialDistribution } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { simulateAr1 } from '@/lib/demo/models';
import { RandomStream } from '@/lib/engine/random';
import { detectShifts } from '@/lib/engine/shifts';
import { foldRecord } from '../alerts/fold';
import { SLOWING_DOWN, simulateNull, stationary, type NullKind } from './shift-nulls';

/**
 * Smallest count k with P(X > k) ≤ tail for X ~ Binomial(trials, p), from simple-statistics' binomial mass
 * function (a general-purpose reference library).
 */
function binomialUpper(trials: number, p: number, tail: number): number {
  const mass = binomialDistribution(trials, p)!;
  let cdf = 0;
  for (let k = 0; k < mass.length; k++) {
    cdf += mass[k];
    if (1 - cdf <= tail) return k;
  }
  return trials;
}

/** Smallest count k with P(X < k) ≤ tail for X ~ Binomial(trials, p). */
function binomialLower(trials: number, p: number, tail: number): number {
  const mass = binomialDistribution(trials, p)!;
  let cdf = 0;
  for (let k = 0; k < mass.length; k++) {
    if (cdf + mass[k] > tail) return k;
    cdf += mass[k];
  }
  return trials;
}

function iidStep(n: number, at: number, size: number, seed: number): Float64Array {
  const rng = new RandomStream(seed, 0);
  return Float64Array.from({ length: n }, (_, i) => (i >= at ? size : 0) + rng.normal());
}

/** Null records of one kind with any shift reported, out of `records` (seeds of our own, unlike the calibration's). */
function falsePositives(kind: NullKind, n: number, records: number): number {
  let count = 0;
  for (let r = 0; r < records; r++) if (detectShifts(simulateNull(kind, n, new RandomStream(424242, n * 10000 + r))).length > 0) count++;
  return count;
}

describe('detectShifts: exact small cases', () => {
  // Least squares puts a single change of mean at the split that minimises the within-segment sum of
  // squares (Hinkley (1970), Biometrika 57, 1–17, from memory); a step of 4 sd in unit iid noise is far above
  // any penalty, so the one shift is at its true index and its size is the step within 4 standard errors
  // (se = √(1/60 + 1/60) ≈ 0.18).
  it('a clean step in iid noise is found at its index', () => {
    const shifts = detectShifts(iidStep(120, 60, 4, 1));
    expect(shifts).toHaveLength(1);
    expect(shifts[0].index).toBe(60);
    expect(Math.abs(shifts[0].size - 4)).toBeLessThan(4 * Math.sqrt(2 / 60));
  });

  it('a downward step gives a negative size, and a 1e7 offset changes nothing', () => {
    const x = iidStep(120, 60, -4, 2);
    const shifted = Float64Array.from(x, (v) => v + 1e7);
    const a = detectShifts(x);
    const b = detectShifts(shifted);
    expect(a).toHaveLength(1);
    expect(a[0].size).toBeLessThan(0);
    expect(b.map((s) => s.index)).toEqual(a.map((s) => s.index));
    expect(Math.abs(b[0].size - a[0].size)).toBeLessThan(1e-6);
  });

  it('a constant series, an empty one and an all-missing one have no shift', () => {
    expect(detectShifts(new Float64Array(500).fill(3.25))).toEqual([]);
    expect(detectShifts(new Float64Array(0))).toEqual([]);
    expect(detectShifts(new Float64Array(50).fill(Number.NaN))).toEqual([]);
    const withGaps = new Float64Array(200).fill(-1);
    for (let i = 10; i < 200; i += 7) withGaps[i] = Number.NaN;
    expect(detectShifts(withGaps)).toEqual([]);
  });

  it('missing points are skipped: the shift is reported at the first observed point of the new level', () => {
    const x = iidStep(400, 200, 4, 3);
    x[199] = Number.NaN;
    x[200] = Number.NaN;
    x[201] = Number.NaN;
    const rng = new RandomStream(3, 1);
    for (let i = 0; i < x.length; i++) if (i < 190 || i > 210) if (rng.uniform() < 0.1) x[i] = Number.NaN;
    const shifts = detectShifts(x);
    expect(shifts).toHaveLength(1);
    expect(shifts[0].index).toBe(202);
    expect(Number.isNaN(x[shifts[0].index])).toBe(false);
  });

  it('refuses an uncalibrated false-positive rate and a bad minimum segment', () => {
    expect(() => detectShifts(new Float64Array(100), { falsePositiveRate: 0.5 })).toThrow(RangeError);
    expect(() => detectShifts(new Float64Array(100), { minSegment: 2.5 })).toThrow(RangeError);
  });
});

describe('detectShifts: false positives at the calibrated rate', () => {
  // Default rate 0.01 per record. Each check counts records with any shift among R fresh nulls and must
  // stay at or below the 99.9 % point of Binomial(R, 0.01) (the binomial law of a count of independent
  // records; one-sided because only too many false positives is a failure). Seeds differ from the
  // calibration's (tests/reference/calibrate_shifts.ts).
  const R = 200;
  const bound = binomialUpper(R, 0.01, 0.001);

  for (const phi of [0, 0.5, 0.9, 0.95]) {
    it(`stationary AR(1), phi = ${phi}, n = 1000: at most ${bound} of ${R}`, () => {
      expect(falsePositives(stationary(phi), 1000, R)).toBeLessThanOrEqual(bound);
    });
  }

  for (const kind of SLOWING_DOWN) {
    for (const n of [200, 1000]) {
      it(`${kind.name}, n = ${n}: at most ${bound} of ${R}`, () => {
        expect(falsePositives(kind, n, R)).toBeLessThanOrEqual(bound);
      });
    }
  }

  // Cessi's (1994) box model forced towards its fold (tests/alerts/fold.ts): rising variance and memory
  // and a curving equilibrium, with no shift inside the record. Bound: 99.9 % point of Binomial(100, 0.01).
  // KNOWN FAILURE, kept visible with it.fails: the detector splits the equilibrium's smooth drift into
  // steps (about 20–35 % of these records report a shift at n = 200 and 1,000), because its pilots
  // estimate the noise from short-lag differences, which a slow drift does not reach. The contract needs
  // this check to pass before ENGINE cuts the analysed stretch at detected shifts; remove `.fails` then.
  it.fails('approach to a fold (Cessi box model), n = 200 and 1000: the pre-fold record shows no shift', () => {
    const records = 100;
    const foldBound = binomialUpper(records, 0.01, 0.001);
    for (const n of [200, 1000]) {
      let count = 0;
      for (let s = 0; s < records; s++) {
        const x = Float64Array.from(foldRecord(n, 90_000 + s), (p) => p.value);
        if (detectShifts(x).length > 0) count++;
      }
      expect(count, `n = ${n}`).toBeLessThanOrEqual(foldBound);
    }
  });
});

describe('detectShifts: power on level steps', () => {
  // A step of 3 long-run sd (σ/(1 − φ) for AR(1) with innovation sd σ) at 60 % of the record. Cells where
  // the power is lower (n = 200 with φ ≥ 0.5, n = 1000 with φ = 0.8) are left out of the claim and reported
  // with the detector (see its doc comment). Claim: found
  // within ±POWER_TOLERANCE points in at least 90 % of records. Check: the count of R = 100 records must
  // reach the 0.1 % point of Binomial(100, 0.9) (so a detector with power 0.9 fails with chance < 0.001,
  // and one with power 0.8 passes with chance < 0.05 — from the same binomial law).
  const R = 100;
  const POWER_TOLERANCE = 5;
  const floor = binomialLower(R, 0.9, 0.001);
  for (const [n, phi] of [[200, 0], [1000, 0], [1000, 0.5], [1000, 0.9], [5000, 0.9], [5000, 0.95]] as const) {
    it(`n = ${n}, phi = ${phi}: found within ±${POWER_TOLERANCE} in ≥ ${floor} of ${R}`, () => {
      const at = Math.round(0.6 * n);
      const step = 3 / (1 - phi);
      let hits = 0;
      for (let r = 0; r < R; r++) {
        const x = simulateAr1({ n, phi, sigma: 1, seed: 5150, stream: n * 1000 + r });
        for (let i = at; i < n; i++) x[i] += step;
        if (detectShifts(x).some((s) => Math.abs(s.index - at) <= POWER_TOLERANCE)) hits++;
      }
      expect(hits).toBeGreaterThanOrEqual(floor);
    });
  }
});

describe('detectShifts: an open record with a published shift', () => {
  // Annual flow of the Nile at Aswan, 1871–1970, from Debian's python3-statsmodels
  // (statsmodels.datasets.nile; fixtures/reference/nile.json, written by tests/reference/nile_fixture.py).
  // Cobb (1978), Biometrika 65, 243–251, places the change of level at 1898/1899 (first low year 1899);
  // Killick, Fearnhead & Eckley (2012) use the same record (from memory). The flow fell by about 250
  // (10^8 m³) at that point (Cobb 1978, from memory).
  const nile = JSON.parse(readFileSync(path.join(__dirname, '../../fixtures/reference/nile.json'), 'utf8')) as {
    year: number[];
    volume: number[];
    publishedChange: { firstYearOfNewLevel: number; tolerance: number };
  };

  // At the default rate 0.01 the detector is built to stay silent on 200-point records of φ = 0.95 and of
  // slowing down, and a 100-year record with a 1.8-sd shift sits just below that bar (the smallest constant
  // reporting no shift on it is 6.1 against 11.25); the check uses the calibrated rate 0.05.
  it('one shift, at 1899 ± 1, downwards (false-positive rate 0.05)', () => {
    const shifts = detectShifts(Float64Array.from(nile.volume), { falsePositiveRate: 0.05 });
    expect(shifts).toHaveLength(1);
    expect(Math.abs(nile.year[shifts[0].index] - nile.publishedChange.firstYearOfNewLevel)).toBeLessThanOrEqual(nile.publishedChange.tolerance);
    expect(shifts[0].size).toBeLessThan(-150);
    expect(shifts[0].size).toBeGreaterThan(-350);
  });
});
