import { readFileSync } from 'node:fs';
import path from 'node:path';
import { binomialDistribution } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { simulateAr1 } from '@/lib/demo/models';
import { buildDemoScenario } from '@/lib/demo/scenario';
import { runAnalysis } from '@/lib/engine/analyze';
import { RandomStream } from '@/lib/engine/random';
import { detectShifts, shiftBandwidth } from '@/lib/engine/shifts';
import { foldRecord } from '../alerts/fold';
import { FOLD_APPROACHES, SLOWING_DOWN, simulateNull, stationary, type NullKind } from './shift-nulls';

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
  // A step of 4 sd in unit iid noise stands about 4/√(8/G) ≈ 9 standard errors above zero at G = 44 (the jump of
  // two one-sided least-squares lines, each of variance ≈ 4σ²/G at its end point: Draper & Smith (1998), Applied
  // Regression Analysis, 3rd ed., Sec. 3.1, the variance of a fitted value, from memory), so the one shift is at
  // its true index and its size is the step within 4 standard errors.
  it('a clean step in iid noise is found at its index', () => {
    const G = shiftBandwidth(120);
    expect(G).toBe(44);
    const shifts = detectShifts(iidStep(120, 60, 4, 1));
    expect(shifts).toHaveLength(1);
    expect(shifts[0].index).toBe(60);
    expect(Math.abs(shifts[0].size - 4)).toBeLessThan(4 * Math.sqrt(8 / G));
  });

  // A straight trend is no shift: each side's own line follows it exactly (common practice: a local-linear fit
  // reproduces a linear trend without bias, Fan & Gijbels 1996, Sec. 3.2, from memory), however steep.
  it('a steep linear trend in iid noise shows no shift, and a step on top of it is found', () => {
    const x = iidStep(600, 0, 0, 4);
    for (let i = 0; i < x.length; i++) x[i] += 0.2 * i;
    expect(detectShifts(x)).toEqual([]);
    for (let i = 400; i < x.length; i++) x[i] += 5;
    const shifts = detectShifts(x);
    expect(shifts.map((s) => s.index)).toEqual([400]);
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

  // The end zone: a large shift is seen soon after it happens. A 6-sd step 20 points before the end of a
  // 1,000-point iid record (G = 126, end-zone threshold 5.7): with 20 new points the jump's standard error is
  // about √(4/126 + 4/20) ≈ 0.48 sd, so the step stands about 12 standard errors above zero.
  it('a large step near the end of the record is found with only 20 points of the new level', () => {
    const shifts = detectShifts(iidStep(1000, 980, 6, 5));
    expect(shifts.map((s) => s.index)).toEqual([980]);
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

  for (const phi of [0, 0.5, 0.8, 0.9, 0.95]) {
    for (const n of [200, 1000]) {
      it(`stationary AR(1), phi = ${phi}, n = ${n}: at most ${bound} of ${R}`, () => {
        expect(falsePositives(stationary(phi), n, R)).toBeLessThanOrEqual(bound);
      });
    }
  }

  for (const kind of SLOWING_DOWN) {
    for (const n of [200, 1000]) {
      it(`${kind.name}, n = ${n}: at most ${bound} of ${R}`, () => {
        expect(falsePositives(kind, n, R)).toBeLessThanOrEqual(bound);
      });
    }
  }

  // Approaches to a fold with no shift inside the record: rising variance and memory and an equilibrium that
  // drifts ever faster along a curve. Cessi's (1994) box model as tests/alerts/fold.ts builds it (σ = 0.04,
  // unlike the calibration's 0.05), and the calibration's two fold families (Cessi, May's 1977 grazing model)
  // on seeds of their own. Bound as above: 99.9 % point of Binomial(200, 0.01).
  for (const n of [200, 1000]) {
    it(`approach to a fold (Cessi box model, tests/alerts/fold.ts), n = ${n}: at most ${bound} of ${R} show a shift`, () => {
      let count = 0;
      for (let s = 0; s < R; s++) if (detectShifts(Float64Array.from(foldRecord(n, 90_000 + s), (p) => p.value)).length > 0) count++;
      expect(count).toBeLessThanOrEqual(bound);
    });
    for (const family of FOLD_APPROACHES) {
      it(`${family.name}, n = ${n}: at most ${bound} of ${R}`, () => {
        let count = 0;
        for (let r = 0; r < R; r++) if (detectShifts(family.simulate(n, 515_151, n * 10000 + r)).length > 0) count++;
        expect(count).toBeLessThanOrEqual(bound);
      });
    }
  }
});

describe('detectShifts: power on level steps', () => {
  // A step of 3 long-run sd (σ/(1 − φ) for AR(1) with innovation sd σ) at 60 % of the record, in every cell of
  // n ∈ {200, 1000, 5000} × φ up to 0.95 we tried (found in 100 of 100 in each); a step of 2 long-run sd is found
  // in 99 of 100 at n = 1000 (φ = 0 and 0.9) but only about 72 of 100 at n = 200, φ = 0 (not claimed). Claim: found
  // within ±POWER_TOLERANCE points in at least 90 % of records. Check: the count of R = 100 records must reach the
  // 0.1 % point of Binomial(100, 0.9) (so a detector with power 0.9 fails with chance < 0.001, and one with power
  // 0.8 passes with chance < 0.05 — from the same binomial law).
  const R = 100;
  const POWER_TOLERANCE = 5;
  const floor = binomialLower(R, 0.9, 0.001);
  for (const [n, phi] of [
    [200, 0],
    [200, 0.5],
    [200, 0.95],
    [1000, 0],
    [1000, 0.5],
    [1000, 0.8],
    [1000, 0.9],
    [5000, 0.9],
    [5000, 0.95],
  ] as const) {
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

  // A 1.8-sd shift 28 years into a 100-year record, judged with straight lines on either side (G = 40; the
  // old level's line has only 28 years): its normalised scan maximum is 4.03, above the calibrated interior
  // constant for the rate 0.05 (3.75) but below that for the default 0.01 (4.95), so at the default rate the
  // detector stays silent on it; the check uses the calibrated rate 0.05.
  it('one shift, at 1899 ± 1, downwards (false-positive rate 0.05)', () => {
    const shifts = detectShifts(Float64Array.from(nile.volume), { falsePositiveRate: 0.05 });
    expect(shifts).toHaveLength(1);
    expect(Math.abs(nile.year[shifts[0].index] - nile.publishedChange.firstYearOfNewLevel)).toBeLessThanOrEqual(nile.publishedChange.tolerance);
    expect(shifts[0].size).toBeLessThan(-150);
    expect(shifts[0].size).toBeGreaterThan(-350);
  });
});

describe('detectShifts on the demo records, as the live analysis runs it', () => {
  // The demo's own records (lib/demo/scenario.ts) through runAnalysis (shifts over the prepared record: span,
  // grid, seasonal removal), no surrogates. Our own scenario, so these check the product, not a published value:
  // the collapsed salinity record shows its jump; the approach to a fold (sedge), the drifting probe (whose only
  // jump is its cleaning) and the stationary controls show no staircase of shifts.
  const NOW = new Date('2031-05-17T15:42:07Z');
  const DAY = 86_400_000;
  const scenario = buildDemoScenario(NOW);
  const shiftsOf = async (slug: string) => {
    const s = scenario.find((d) => d.input.slug === slug)!;
    const kept = [...s.values.keys()].filter((i) => !Number.isNaN(s.values[i]));
    const result = await runAnalysis(
      { time: Float64Array.from(kept, (i) => s.times[i]), value: Float64Array.from(kept, (i) => s.values[i]), intervalMs: s.input.intervalMs },
      { ...s.input.settings, surrogates: 0, indicators: ['ac1'] },
      { parallel: false },
    );
    return { s, days: result.shifts.map((x) => Math.round((x.time - s.times[0]) / DAY)) };
  };

  it('the collapsed salinity record: one shift, within 60 days of where the record crosses between its levels, none before the fold', async () => {
    // The crossing as tests/demo/live-analysis.test.ts reads it off the record: the first day after the mark above
    // the midpoint between the 100 days before the mark and the last 100 days. The jump takes about 50 days, so a
    // change point anywhere on it lies within 60 days of the crossing (the same tolerance as that test).
    const { s, days } = await shiftsOf('veskary-salinity-contrast');
    const mark = s.marks[0].index;
    const mean = (a: number, b: number) => s.values.slice(a, b).reduce((p, q) => p + q, 0) / (b - a);
    const mid = (mean(mark - 100, mark) + mean(s.values.length - 100, s.values.length)) / 2;
    const crossing = mark + s.values.slice(mark).findIndex((v) => v > mid);
    expect(days).toHaveLength(1);
    expect(Math.abs(days[0] - crossing)).toBeLessThanOrEqual(60);
  });

  it('the drifting oxygen probe: only its cleaning, within 5 days', async () => {
    const { s, days } = await shiftsOf('orlemere-oxygen-probe');
    const cleaning = s.marks[0].index;
    expect(days.length).toBeLessThanOrEqual(1);
    for (const d of days) expect(Math.abs(d - cleaning)).toBeLessThanOrEqual(5);
  });

  for (const slug of [
    'brandwhistle-sedge-biomass',
    'veskary-deep-temperature',
    'orlemere-surface-temperature',
    'brandwhistle-water-table',
    'kestrith-station-pressure',
  ]) {
    it(`${slug}: no shift`, async () => {
      expect((await shiftsOf(slug)).days).toEqual([]);
    });
  }
});
