import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { runAnalysis, summarizeAnalysis } from '@/lib/engine/analyze';
import { INDICATORS, indicatorDefinition, type IndicatorName } from '@/lib/engine/indicators';
import { indicatorTrends } from '@/lib/engine/kendall';
import { simulateDoubleWell } from '@/lib/demo/models';
import { RandomStream } from '@/lib/engine/random';
import { evaluationStride, rollingIndicators, type IndicatorCompanions } from '@/lib/engine/rolling';
import { sensitivityGrid } from '@/lib/engine/sensitivity';
import { analysisSettingsSchema } from '@/lib/engine/settings';

// Source: reference values written by tests/reference/make_indicator_fixtures.py (library versions recorded in the
// JSON): scipy.stats.linregress (restoring rate and its standard error), numpy.fft.fft (periodogram),
// statsmodels het_arch (Engle's LM statistic and χ²(1) p), numpy.polyfit (DFA), scipy.stats.skew/kurtosis
// (bimodality), scipy.stats.kendalltau(method='asymptotic'); potential wells by the same recipe in numpy (numpy.polyfit)
// and, on well-separated states, by scipy.stats.gaussian_kde without binning.
const ref = JSON.parse(readFileSync(path.resolve(__dirname, '../../fixtures/reference/indicator_reference.json'), 'utf8'));
const NEW: IndicatorName[] = ['restoring-rate', 'spectral-ratio', 'ch', 'dfa', 'bimodality', 'potential-wells'];

function rel(a: number, b: number): number {
  return Math.abs(a - b) / Math.abs(b);
}

/** The value and companions of one indicator on one whole window, through the same rolling path an analysis uses. */
function onWindow(name: IndicatorName, r: Float64Array, dt: number): { value: number; companions: Record<string, number> } {
  const companions: IndicatorCompanions = {};
  const values = rollingIndicators(r, r.length, [name], { dt, companions });
  const last = r.length - 1;
  return { value: values[name][last], companions: Object.fromEntries(Object.entries(companions[name] ?? {}).map(([k, a]) => [k, a[last]])) };
}

describe('indicators of issue 17 against numpy/scipy/statsmodels', () => {
  it('records the library versions it came from', () => {
    for (const lib of ['numpy', 'scipy', 'statsmodels']) expect(ref.versions[lib]).toMatch(/^\d+\./);
  });

  for (const window of ref.windows as { name: string; r: number[]; dt: number; values: Record<string, Record<string, number | null>> }[]) {
    it(`${window.name} (w = ${window.r.length}): every indicator and companion to 1e-9 relative`, () => {
      const r = Float64Array.from(window.r);
      for (const name of NEW) {
        const want = window.values[name];
        const got = onWindow(name, r, window.dt);
        if (want.value === null) {
          expect(got.value, name).toBeNaN();
          continue;
        }
        expect(rel(got.value, want.value), `${name}: ${got.value} vs ${want.value}`).toBeLessThan(1e-9);
        for (const [companion, value] of Object.entries(want)) {
          if (companion === 'value') continue;
          expect(rel(got.companions[companion], value!), `${name} ${companion}`).toBeLessThan(1e-9);
        }
      }
    });
  }

  for (const sample of ref.wells as { name: string; r: number[]; states: number; binned: number; unbinned: number }[]) {
    it(`potential wells: ${sample.name} gives ${sample.states}, as numpy and scipy's unbinned density do`, () => {
      expect([sample.binned, sample.unbinned]).toEqual([sample.states, sample.states]);
      expect(onWindow('potential-wells', Float64Array.from(sample.r), 1).value).toBe(sample.states);
    });
  }

  it('rolling at a stride: windows counted back from the latest, Kendall tau over the evaluated ones (scipy)', () => {
    const { r: values, w, stride, dt, ends, indicators } = ref.rolling;
    const r = Float64Array.from(values as number[]);
    const companions: IndicatorCompanions = {};
    const ind = rollingIndicators(r, w, NEW, { dt, stride, companions });
    const trends = indicatorTrends(ind);
    for (const name of NEW) {
      const want = indicators[name];
      const evaluated = ends as number[];
      const defined = [...ind[name].keys()].filter((i) => Number.isFinite(ind[name][i]));
      // bimodality is O(1) per window, so it is computed at every window; the others only at the stride
      if (indicatorDefinition(name)!.kind === 'window') expect(defined, name).toEqual(evaluated);
      evaluated.forEach((e, k) => {
        expect(rel(ind[name][e], want.values[k].value), `${name} at ${e}`).toBeLessThan(1e-9);
        if (name === 'restoring-rate') expect(rel(companions[name]!.standardError[e], want.values[k].standardError)).toBeLessThan(1e-9);
        if (name === 'ch') expect(rel(companions[name]!.p[e], want.values[k].p)).toBeLessThan(1e-9);
      });
      if (indicatorDefinition(name)!.kind !== 'window') continue;
      expect(Math.abs(trends[name]!.tau - want.kendall.tau), `${name} tau`).toBeLessThan(1e-12);
      expect(rel(trends[name]!.p, want.kendall.p), `${name} p`).toBeLessThan(1e-9);
    }
  });
});

describe('the registry', () => {
  it('declares for every indicator a direction, formula, cost and source; new ones are opt-in', () => {
    for (const d of INDICATORS) {
      expect(['rising', 'falling', 'two-sided'], d.name).toContain(d.direction);
      for (const text of [d.formula, d.cost, d.source]) expect(text.length, d.name).toBeGreaterThan(5);
    }
    expect(analysisSettingsSchema.parse({}).indicators).toEqual(['variance', 'sd', 'cv', 'ac1', 'skewness', 'kurtosis', 'recovery']);
    expect(analysisSettingsSchema.parse({ indicators: ['dfa', 'ch', 'variance'] }).indicators).toEqual(['variance', 'ch', 'dfa']);
    expect(analysisSettingsSchema.safeParse({ indicators: ['spectral'] }).success).toBe(false);
  });

  // ⌈count/max⌉ by hand: 500,001 windows at most 400 evaluated → every 1,251st; 300 windows fit in 400 → every one.
  it('evaluation stride', () => {
    expect(evaluationStride(500_001, 400)).toBe(1251);
    expect(evaluationStride(300, 400)).toBe(1);
    expect(Math.floor((500_001 - 1) / 1251) + 1).toBeLessThanOrEqual(400);
  });
});

describe('an analysis with the new indicators', () => {
  it('carries companions, the evaluation stride and the latest companion values; surrogates go through the same path', async () => {
    const rng = new RandomStream(5, 0);
    const n = 3000;
    const value = new Float64Array(n);
    for (let i = 1; i < n; i++) value[i] = (0.2 + (0.7 * i) / n) * value[i - 1] + rng.normal();
    const time = Float64Array.from({ length: n }, (_, i) => i);
    const settings = analysisSettingsSchema.parse({ indicators: [...NEW, 'ac1'], surrogates: 19, maxEvaluatedWindows: 100, shiftDetection: 'off' });
    const result = await runAnalysis({ time, value, timeKind: 'numeric' }, settings, { parallel: false });
    const stride = Math.ceil((n - result.windowPoints + 1) / 100);
    expect(result.evaluatedEvery).toMatchObject({
      ac1: 1,
      bimodality: 1,
      dfa: stride,
      ch: stride,
      'restoring-rate': stride,
      'spectral-ratio': stride,
      'potential-wells': stride,
    });
    const dfa = result.indicators.dfa!;
    expect(dfa.filter((v) => v !== null).length).toBeLessThanOrEqual(100);
    expect(dfa[n - 1]).not.toBeNull();
    expect(result.companions['restoring-rate']!.standardError[n - 1]).toBeGreaterThan(0);
    expect(result.companions.ch!.p[n - 1]).toBeGreaterThanOrEqual(0);
    for (const name of NEW) {
      expect(result.kendall[name]!.direction).toBe('rising');
      // An AR(1) surrogate has one well in every window, so its tau is undefined (all tied) and it is not counted.
      if (name === 'potential-wells') expect(result.significance[name]!.count).toBeLessThanOrEqual(19);
      else expect(result.significance[name]!.count).toBe(19);
    }
    const summary = summarizeAnalysis(result);
    expect('companions' in summary).toBe(false);
    expect(summary.latest['restoring-rate']!.companions!.standardError).toBe(result.companions['restoring-rate']!.standardError[n - 1]);
    expect(summary.latest.ac1!.companions).toBeUndefined();
  });
});

describe('flickering by potential analysis', () => {
  // Published behaviour (Livina et al. (2010), Clim. Past 6, 77–82, from memory): a record that stays in one well of
  // the double-well potential U(x) = x⁴/4 − x²/2 shows one state; once noise kicks it between the wells at ±1 it
  // shows two. Model: lib/demo/models.ts simulateDoubleWell (no forcing), σ = 0.2 (the barrier ΔU = 1/4 is not
  // crossed in 1,000 samples) followed by σ = 0.6 (frequent crossings).
  it('one well while the record stays in one state, two once it flickers; the count rises', async () => {
    const grid = { n: 1000, dt: 0.5, substeps: 20, amplitude: 0, period: 1 };
    const calm = simulateDoubleWell({ ...grid, sigma: 0.2, x0: 1, seed: 8 });
    const flicker = simulateDoubleWell({ ...grid, sigma: 0.6, x0: calm[calm.length - 1], seed: 9 });
    const value = new Float64Array([...calm, ...flicker]);
    const time = Float64Array.from({ length: value.length }, (_, i) => i);
    const settings = analysisSettingsSchema.parse({ indicators: ['potential-wells'], detrend: 'linear', window: 0.25, shiftDetection: 'off' });
    const result = await runAnalysis({ time, value, timeKind: 'numeric' }, settings, { parallel: false });
    const wells = result.indicators['potential-wells']!.filter((v): v is number => v !== null);
    expect(wells[0]).toBe(1);
    expect(wells[wells.length - 1]).toBe(2);
    expect(result.kendall['potential-wells']!.tau!).toBeGreaterThan(0.5);
  });
});

describe('sensitivity of a per-window indicator', () => {
  it('evaluates each (bandwidth, window) cell at the same bounded number of windows', () => {
    const rng = new RandomStream(6, 0);
    const x = new Float64Array(800);
    for (let i = 1; i < x.length; i++) x[i] = (0.2 + (0.7 * i) / x.length) * x[i - 1] + rng.normal();
    const grid = sensitivityGrid(x, x, {
      detrend: 'gaussian',
      movingAverageWidth: 11,
      bandwidth: 0.1,
      indicators: ['dfa', 'ac1'],
      dt: 1,
      maxEvaluatedWindows: 40,
      windows: [0.3, 0.5],
      bandwidths: [0.05, 0.1],
    });
    expect(grid.indicators.dfa!.tau.flat().every((t) => t !== null)).toBe(true);
    expect(grid.indicators.ac1!.tau).toHaveLength(2);
  });
});
