import { cessiFolds, grazingFolds, simulateCessi, simulateGrazing, type GrazingParameters } from '@/lib/demo/models';
import { RandomStream } from '@/lib/engine/random';

/**
 * Null records for the shift detector (no abrupt shift anywhere), shared by its calibration
 * (tests/reference/calibrate_shifts.ts) and its checks (tests/engine/shifts.test.ts), which use different seeds.
 */

/** A named kind of null record: φ and the innovation sd as functions of the position u = t/(n − 1) in [0, 1]. */
export interface NullKind {
  name: string;
  phi: (u: number) => number;
  sigma: (u: number) => number;
}

/** Stationary AR(1) with coefficient φ and unit innovations. */
export function stationary(phi: number): NullKind {
  return { name: `AR(1) phi=${phi}`, phi: () => phi, sigma: () => 1 };
}

/**
 * Slowing-down nulls: memory and variance rise over the record as before a fold, with no shift of level.
 * "memory" raises φ from 0.2 to 0.95 with constant innovations (stationary variance ×9.7, long-run variance
 * ×160); "memory+noise" raises φ from 0.5 to 0.95 and the innovation sd from 1 to 2 (variance ×31).
 * Our own choices, spanning the range of lag-1 autocorrelation early-warning studies report before folds.
 */
export const SLOWING_DOWN: NullKind[] = [
  { name: 'slowing down: phi 0.2→0.95', phi: (u) => 0.2 + 0.75 * u, sigma: () => 1 },
  { name: 'slowing down: phi 0.5→0.95, sd 1→2', phi: (u) => 0.5 + 0.45 * u, sigma: (u) => 1 + u },
];

/**
 * x_0 ~ N(0, σ(0)²/(1 − φ(0)²)) (stationary start), x_t = φ(u_t) x_{t−1} + σ(u_t) ε_t, ε standard normal.
 * With constant φ and σ this is the exact stationary AR(1) of Box, Jenkins, Reinsel & Ljung (2015), Sec. 3.2.
 * O(n).
 */
export function simulateNull(kind: NullKind, n: number, rng: RandomStream): Float64Array {
  const out = new Float64Array(n);
  const phi0 = kind.phi(0);
  let x = (kind.sigma(0) / Math.sqrt(1 - phi0 * phi0)) * rng.normal();
  out[0] = x;
  for (let t = 1; t < n; t++) {
    const u = t / (n - 1);
    x = kind.phi(u) * x + kind.sigma(u) * rng.normal();
    out[t] = x;
  }
  return out;
}

/** A family of null records given by its simulator: n samples from stream `stream` of seed `seed`. */
export interface NullFamily {
  name: string;
  simulate: (n: number, seed: number, stream: number) => Float64Array;
}

/** A NullKind as a NullFamily (simulateNull on RandomStream(seed, stream)). */
export function nullFamily(kind: NullKind): NullFamily {
  return { name: kind.name, simulate: (n, seed, stream) => simulateNull(kind, n, new RandomStream(seed, stream)) };
}

const CESSI_MU2 = 6.2;
const GRAZING: GrazingParameters = { r: 1, K: 10, h: 1 };

/**
 * Approaches to a fold with no shift inside the record, from the demo's simulators (lib/demo/models.ts): the
 * forcing ramps linearly over the n samples and stops short of the fold, so the equilibrium drifts ever faster
 * along a curve while variance and memory rise. Cessi (1994): μ² = 6.2, p from 0.6 towards the rising fold, which
 * it would reach at 1.1·n (as tests/alerts/fold.ts), σ = 0.05, dt = 0.05. May (1977) grazing: r = 1, K = 10,
 * h = 1, c from 1.2 to 0.97 of the collapse fold at the last sample (as the demo's approaching sedge record),
 * multiplicative σ = 0.05, dt = 0.1. Ten Euler–Maruyama steps per sample.
 */
export const FOLD_APPROACHES: NullFamily[] = [
  {
    name: 'fold approach: Cessi box model',
    simulate: (n, seed, stream) => {
      const p0 = 0.6;
      const dt = 0.05;
      const rate = (cessiFolds(CESSI_MU2).rising.p - p0) / (1.1 * n * dt);
      return simulateCessi({ mu2: CESSI_MU2, p0, sigma: 0.05, n, dt, substeps: 10, rate, seed, stream }).values;
    },
  },
  {
    name: 'fold approach: May grazing model',
    simulate: (n, seed, stream) => {
      const c0 = 1.2;
      const dt = 0.1;
      const rate = (0.97 * grazingFolds(GRAZING).collapse.c - c0) / ((n - 1) * dt);
      return simulateGrazing({ ...GRAZING, c0, sigma: 0.05, n, dt, substeps: 10, rate, seed, stream }).values;
    },
  },
];
