/**
 * Detection rates of the rising indicators on simulated approaches to a fold (issue 17): the share of runs in which
 * the surrogate p in the indicator's direction is ≤ 0.05, with its exact (Clopper–Pearson) 95% interval; beside each,
 * the false-alarm share on stationary AR(1) records of the same length. Informational: no target (power depends on
 * the model, the noise and the record; the false-alarm level is tested in tests/engine/indicator-calibration.test.ts).
 * Expect ch, bimodality and potential-wells to stay near the false-alarm rate here: additive noise around one slowing
 * state neither makes the variance of the shocks depend on the state (what ch looks for) nor visits a second state
 * (what bimodality and the wells look for); they answer state-dependent noise and flickering, which this model does
 * not have. Measured (2 cores, seeds as below): variance, sd 40/40; cv 35/40; ac1 32/40; restoring-rate 31/40;
 * spectral-ratio 19/40; dfa 15/40; ch 1/40; bimodality and potential-wells 0/40. Site-level, three sensors reading the
 * same fold approach (see `site`), 99 phase-coherent surrogates: pc1-variance 37/40, pc1-share 34/40, maf-ac1 24/40;
 * with a stationary driver 1, 2 and 2 false alarms of 40 (the nominal level is tested in tests/engine/site.test.ts).
 */
import { runAnalysis } from '../lib/engine/analyze';
import { INDICATORS, type IndicatorName } from '../lib/engine/indicators';
import { RandomStream } from '../lib/engine/random';
import { analysisSettingsSchema } from '../lib/engine/settings';
import { SITE_INDICATORS, runSiteAnalysis } from '../lib/engine/site';
import { binomCdf } from '../tests/engine/binomial';
import type { BenchRow } from './index';

export const title = 'indicator power';

const RUNS = 40;
const SAMPLES = 1000;
const SURROGATES = 99;

/**
 * The saddle-node normal form dx = (r + x²) dt + σ dW with r ramped from −1 to −0.04 (short of the fold at 0), Euler–
 * Maruyama with step 0.01, sampled every 0.5 time units; the stable state −√(−r) loses resilience as r → 0⁻
 * (Strogatz (1994), Nonlinear Dynamics and Chaos, Sec. 3.1, from memory). The same model as the fold check in
 * tests/engine/calibration.test.ts.
 */
function foldApproach(run: number): Float64Array {
  const rng = new RandomStream(1717, run);
  const every = 50;
  const h = 0.01;
  const sigma = 0.03;
  const value = new Float64Array(SAMPLES);
  let x = -1;
  const steps = SAMPLES * every;
  for (let s = 0; s < steps; s++) {
    const r = -1 + 0.96 * (s / steps);
    x += (r + x * x) * h + sigma * Math.sqrt(h) * rng.normal();
    if (s % every === every - 1) value[(s - every + 1) / every] = x;
  }
  return value;
}

/** Stationary Gaussian AR(1) with φ = 0.6 (no approach to any transition). */
function stationary(run: number): Float64Array {
  const rng = new RandomStream(1718, run);
  const value = new Float64Array(SAMPLES);
  value[0] = rng.normal() / Math.sqrt(1 - 0.36);
  for (let i = 1; i < SAMPLES; i++) value[i] = 0.6 * value[i - 1] + rng.normal();
  return value;
}

/** Exact binomial 95% interval by bisection on the binomial tails (Clopper & Pearson (1934), Biometrika 26, 404–413). */
function clopperPearson(k: number, n: number): [number, number] {
  const solve = (above: (p: number) => boolean) => {
    let lo = 0,
      hi = 1;
    for (let it = 0; it < 60; it++) {
      const mid = (lo + hi) / 2;
      if (above(mid)) lo = mid;
      else hi = mid;
    }
    return (lo + hi) / 2;
  };
  const lower = k === 0 ? 0 : solve((p) => 1 - binomCdf(k - 1, n, p) < 0.025);
  const upper = k === n ? 1 : solve((p) => binomCdf(k, n, p) > 0.025);
  return [lower, upper];
}

async function rejections(make: (run: number) => Float64Array, names: IndicatorName[]): Promise<Record<string, number>> {
  const settings = analysisSettingsSchema.parse({ indicators: names, surrogates: SURROGATES, window: 0.5, bandwidth: 0.05, shiftDetection: 'off' });
  const time = Float64Array.from({ length: SAMPLES }, (_, i) => i * 0.5);
  const counts: Record<string, number> = Object.fromEntries(names.map((name) => [name, 0]));
  for (let run = 0; run < RUNS; run++) {
    const result = await runAnalysis({ time, value: make(run), timeKind: 'numeric' }, { ...settings, seed: 100 + run });
    for (const name of names) if ((result.significance[name]?.p ?? 1) <= 0.05) counts[name]++;
  }
  return counts;
}

/** Sensors of one simulated site. */
const SITE_SERIES = 3;

/**
 * A site of SITE_SERIES sensors that all read one driver (the fold approach, or the stationary AR(1)) with weights
 * 1, 0.8, 0.6, …, each plus its own independent AR(1) measurement noise (φ = 0.3, sd 0.01 on the fold's scale of
 * about 0.03, 0.3 on the null's of 1.25), so the common mode dominates as it slows down.
 */
function site(driver: (run: number) => Float64Array, noiseSd: number) {
  return (run: number): Float64Array[] => {
    const common = driver(run);
    return Array.from({ length: SITE_SERIES }, (_, k) => {
      const rng = new RandomStream(1719 + k, run);
      let e = 0;
      return Float64Array.from(common, (c) => {
        e = 0.3 * e + noiseSd * rng.normal();
        return (1 - 0.2 * k) * c + e;
      });
    });
  };
}

/** Runs (of RUNS) in which each site indicator's phase-coherent surrogate p is ≤ 0.05. */
function siteRejections(make: (run: number) => Float64Array[]): Record<string, number> {
  const settings = analysisSettingsSchema.parse({ surrogates: SURROGATES, window: 0.5, bandwidth: 0.05, shiftDetection: 'off' });
  const counts: Record<string, number> = Object.fromEntries(SITE_INDICATORS.map((d) => [d.name, 0]));
  for (let run = 0; run < RUNS; run++) {
    const result = runSiteAnalysis({ values: make(run) }, { ...settings, seed: 200 + run });
    for (const d of SITE_INDICATORS) if ((result.significance[d.name]?.p ?? 1) <= 0.05) counts[d.name]++;
  }
  return counts;
}

export async function run(): Promise<BenchRow[]> {
  const rising = INDICATORS.filter((d) => d.direction === 'rising').map((d) => d.name);
  const fold = await rejections(foldApproach, rising);
  const nulls = await rejections(stationary, rising);
  const siteFold = siteRejections(site(foldApproach, 0.01));
  const siteNulls = siteRejections(site(stationary, 0.3));
  return [
    ...rising.map((name) =>
      detectionRow(`detects a fold approach at p ≤ 0.05: ${name}`, fold[name], `${SURROGATES} AR(1) surrogates; stationary AR(1)`, nulls[name]),
    ),
    ...SITE_INDICATORS.map((d) =>
      detectionRow(
        `detects a fold approach at p ≤ 0.05 across ${SITE_SERIES} sensors: ${d.name}`,
        siteFold[d.name],
        `${SURROGATES} phase-coherent surrogates; stationary driver`,
        siteNulls[d.name],
      ),
    ),
  ];
}

/** One detection row: hits of RUNS with their exact 95% interval, and the false alarms of the matching null. */
function detectionRow(label: string, hits: number, method: string, falseAlarms: number): BenchRow {
  const [lo, hi] = clopperPearson(hits, RUNS);
  return {
    case: label,
    n: SAMPLES,
    value: (100 * hits) / RUNS,
    unit: '%',
    note: `${hits}/${RUNS} runs (95% CI ${(100 * lo).toFixed(0)}–${(100 * hi).toFixed(0)}%), ${method}: ${falseAlarms}/${RUNS} false alarms`,
  };
}
