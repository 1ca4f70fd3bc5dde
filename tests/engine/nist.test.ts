import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { linearFit } from '@/lib/engine/detrend';
import { windowMoments } from '@/lib/engine/rolling';

const dir = path.resolve(__dirname, '../../fixtures/nist');
const load = (f: string) => JSON.parse(readFileSync(path.join(dir, f), 'utf8'));

/** Significant digits of agreement, −log10(|a − c|/|c|) (Infinity when equal). */
const digits = (a: number, c: number) => (a === c ? Infinity : -Math.log10(Math.abs(a - c) / Math.abs(c)));

// Source: NIST Statistical Reference Datasets, Univariate Summary Statistics (certified mean, standard
// deviation, lag-1 autocorrelation r(1)); files copied from ../shared/reference/nist/. Each file's
// float64_floor_sig_digits is the agreement the EXACT statistics of the float64-rounded data reach, the
// best any double-precision program can do; we hold that, capped at 13 digits, less 0.1 for rounding in
// the sums. The whole record is one rolling window (w = n), so this exercises the engine's window sums.
describe('NIST StRD univariate datasets (one window over the whole record)', () => {
  const files = readdirSync(dir).filter((f) => f !== 'Norris.json');
  it('has all nine datasets', () =>
    expect(files.sort()).toEqual(['Lew', 'Lottery', 'Mavro', 'Michelso', 'NumAcc1', 'NumAcc2', 'NumAcc3', 'NumAcc4', 'PiDigits'].map((n) => `${n}.json`)));
  for (const f of files) {
    it(`${f.replace('.json', '')}: mean, sd and r(1) to the certified digits double precision allows`, () => {
      const d = load(f);
      const x = Float64Array.from(d.values as number[]);
      const n = x.length;
      expect(n).toBe(d.n);
      const m = windowMoments(x, n);
      const got = { mean: m.mean[0], sd: Math.sqrt(m.m2[0] / (n - 1)), ac1: m.lag[0] / m.m2[0] };
      for (const key of ['mean', 'sd', 'ac1'] as const) {
        const need = Math.min(d.float64_floor_sig_digits[key], 13) - 0.1;
        expect(digits(got[key], d.certified[key]), `${key}`).toBeGreaterThanOrEqual(need);
      }
    });
  }
});

// Source: NIST StRD Linear Least Squares Regression, dataset Norris (certified B0, B1, residual sd).
// agreement_sig_digits in the file shows numpy's lstsq reaching 12.3 digits for B0; we ask for 12.
describe('NIST StRD Norris (linear detrending fit)', () => {
  it('reproduces the certified intercept, slope and residual standard deviation', () => {
    const d = load('Norris.json');
    const fit = linearFit(Float64Array.from(d.x), Float64Array.from(d.y));
    expect(digits(fit.intercept, d.certified.B0)).toBeGreaterThanOrEqual(12);
    expect(digits(fit.slope, d.certified.B1)).toBeGreaterThanOrEqual(12);
    expect(digits(fit.residualSd, d.certified.residual_sd)).toBeGreaterThanOrEqual(12);
  });
});
