import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { detrend } from '@/lib/engine/detrend';
import { dft } from '@/lib/engine/fft';
import { binomialInterval } from './binomial';
import { RandomStream } from '@/lib/engine/random';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { coherentPhaseSurrogate, rollingSiteIndicators, runSiteAnalysis, SITE_INDICATORS, siteWindow } from '@/lib/engine/site';

// Source: tests/reference/make_indicator_fixtures.py (versions in the JSON): numpy.cov (ddof 1), numpy.linalg.eigvalsh,
// scipy.linalg.eigh(cov of differences, cov, eigvals_only=True).
const ref = JSON.parse(readFileSync(path.resolve(__dirname, '../../fixtures/reference/indicator_reference.json'), 'utf8')).site;
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

describe('site-level indicators against numpy/scipy eigen-solvers', () => {
  for (const window of ref.windows as { columns: number[][]; values: Record<string, number> }[]) {
    const k = window.columns.length;
    const w = window.columns[0].length;
    it(`k = ${k} series, w = ${w}: pc1-variance, pc1-share, maf-ac1 to 1e-9 relative`, () => {
      const got = siteWindow(
        window.columns.map((c) => Float64Array.from(c)),
        w - 1,
        w,
      );
      for (const d of SITE_INDICATORS) expect(rel(got[d.name], window.values[d.name]), d.name).toBeLessThan(1e-9);
    });
  }

  it('rolling at a stride: the windows counted back from the latest, each as numpy gives it', () => {
    const { columns, w, stride, ends, values } = ref.rolling;
    const out = rollingSiteIndicators(
      (columns as number[][]).map((c) => Float64Array.from(c)),
      w,
      stride,
    );
    for (const d of SITE_INDICATORS) {
      expect(
        [...out[d.name].keys()].filter((i) => Number.isFinite(out[d.name][i])),
        d.name,
      ).toEqual(ends);
      (ends as number[]).forEach((e, i) => expect(rel(out[d.name][e], values[i][d.name]), `${d.name} at ${e}`).toBeLessThan(1e-9));
    }
  });
});

describe('phase-coherent surrogates (Prichard & Theiler 1994)', () => {
  // Same random phase per frequency for every column: each periodogram and each cross-spectrum is kept, so the
  // (circular) lag-0 cross products Σ_j x_a[j] x_b[j] = (1/n) Σ_f X_a X_b* are those of the data (Parseval).
  it('keep every auto- and cross-product of the columns', () => {
    const rng = new RandomStream(3, 0);
    const n = 257;
    const common = Float64Array.from({ length: n }, () => rng.normal());
    const columns = [0, 1, 2].map((c) => Float64Array.from(common, (v) => (c + 1) * v + rng.normal()));
    const surrogate = coherentPhaseSurrogate(
      columns.map((c) => dft(c, new Float64Array(n))),
      9,
      4,
    );
    const dot = (a: Float64Array, b: Float64Array) => a.reduce((s, v, i) => s + v * b[i], 0);
    for (let a = 0; a < 3; a++)
      for (let b = a; b < 3; b++) expect(rel(dot(surrogate[a], surrogate[b]), dot(columns[a], columns[b])), `${a}×${b}`).toBeLessThan(1e-9);
    expect(surrogate[0]).not.toEqual(columns[0]);
  });
});

describe('runSiteAnalysis', () => {
  it('rises as three sensors driven by one slowing process lose resilience; input it cannot use is a clear error', () => {
    const rng = new RandomStream(11, 0);
    const n = 600;
    let driver = 0;
    const columns = [new Float64Array(n), new Float64Array(n), new Float64Array(n)];
    for (let i = 0; i < n; i++) {
      driver = (0.2 + (0.75 * i) / n) * driver + rng.normal();
      columns.forEach((c, k) => (c[i] = (k + 1) * driver + rng.normal()));
    }
    const settings = analysisSettingsSchema.parse({ surrogates: 19, maxEvaluatedWindows: 60 });
    const result = runSiteAnalysis({ values: columns }, settings);
    expect(result.windowPoints).toBe(300);
    expect(result.evaluatedEvery).toBe(Math.ceil(301 / 60));
    for (const d of SITE_INDICATORS) {
      expect(result.kendall[d.name].direction).toBe('rising');
      expect(result.significance[d.name]!.count).toBe(19);
    }
    expect(result.kendall['pc1-variance'].tau!).toBeGreaterThan(0.5);
    expect(result.kendall['maf-ac1'].tau!).toBeGreaterThan(0.5);
    expect(() => runSiteAnalysis({ values: [columns[0]] }, settings)).toThrow(/at least two/);
    const gap = Float64Array.from(columns[1]);
    gap[10] = Number.NaN;
    expect(() => runSiteAnalysis({ values: [columns[0], gap] }, settings)).toThrow(/no value at point 11/);
  });
});

describe('runSiteAnalysis with each series detrended its own way', () => {
  // Expected: the engine's detrend of each column by hand (its own checks against numpy are in detrend tests), the
  // residuals aligned at their ends, then the site analysis of those residuals with no further detrending.
  it('equals the analysis of the residuals each column’s own detrending gives, a differenced one aligned at the end', () => {
    const rng = new RandomStream(23, 0);
    const n = 400;
    const columns = [0, 1, 2].map((k) => Float64Array.from({ length: n }, (_, i) => 0.01 * k * i + Math.sin(i / 40) + rng.normal()));
    const settings = analysisSettingsSchema.parse({ surrogates: 9, maxEvaluatedWindows: 50, window: 0.4 });
    const detrending = [
      { detrend: 'linear', bandwidth: 0.1, movingAverageWidth: 11 },
      { detrend: 'gaussian', bandwidth: '40 points', movingAverageWidth: 11 },
      { detrend: 'difference', bandwidth: 0.1, movingAverageWidth: 11 },
    ] as const;
    const result = runSiteAnalysis({ values: columns, detrending }, settings);
    const residuals = [
      detrend(columns[0], 'linear', { bandwidthPoints: 40, movingAverageWidth: 11 }).residual.subarray(1),
      detrend(columns[1], 'gaussian', { bandwidthPoints: 40, movingAverageWidth: 11 }).residual.subarray(1),
      detrend(columns[2], 'difference', { bandwidthPoints: 40, movingAverageWidth: 11 }).residual,
    ];
    const expected = runSiteAnalysis({ values: residuals }, { ...settings, detrend: 'none' });
    expect(result.n).toBe(n - 1);
    expect(result.indicators).toEqual(expected.indicators);
    expect(result.kendall).toEqual(expected.kendall);
    expect(result.significance).toEqual(expected.significance);
    expect(() => runSiteAnalysis({ values: columns, detrending: detrending.slice(1) }, settings)).toThrow(/one per series/);
  });
});

// False alarms on stationary nulls: three sensors driven by one stationary AR(1) process (φ uniform on [0.3, 0.7])
// plus their own noise. With 19 phase-coherent surrogates p ≤ 0.05 exactly when no surrogate reaches τ, probability
// 1/20 under exchangeability (Davison & Hinkley (1997), Sec. 4.2.1, from memory); phase randomisation is exact for
// stationary linear Gaussian processes only up to the periodic extension, so this checks that it holds here. The count
// over 300 seeded sites must lie in the central 99.9% of Binomial(300, 0.05) (binomialInterval: [4, 29]).
describe('site-level false alarms at the nominal rate', () => {
  it('stationary common driver: p ≤ 0.05 at a rate consistent with 5% for each site indicator', () => {
    const settings = analysisSettingsSchema.parse({ surrogates: 19, detrend: 'linear', window: 0.5 });
    const counts = Object.fromEntries(SITE_INDICATORS.map((d) => [d.name, 0]));
    const replicates = 300;
    const n = 160;
    for (let r = 0; r < replicates; r++) {
      const rng = new RandomStream(4242, r);
      const phi = 0.3 + 0.4 * rng.uniform();
      let driver = rng.normal() / Math.sqrt(1 - phi * phi);
      const columns = [new Float64Array(n), new Float64Array(n), new Float64Array(n)];
      for (let i = 0; i < n; i++) {
        driver = phi * driver + rng.normal();
        columns.forEach((c) => (c[i] = driver + rng.normal()));
      }
      const result = runSiteAnalysis({ values: columns }, { ...settings, seed: 500 + r });
      for (const d of SITE_INDICATORS) if ((result.significance[d.name]!.p ?? 1) <= 0.05) counts[d.name]++;
    }
    const { lo, hi } = binomialInterval(replicates, 0.05, 0.999);
    expect([lo, hi]).toEqual([4, 29]);
    for (const [name, c] of Object.entries(counts)) {
      expect(c, name).toBeGreaterThanOrEqual(lo);
      expect(c, name).toBeLessThanOrEqual(hi);
    }
  }, 240_000);
});
