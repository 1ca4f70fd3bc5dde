import { accurateMean } from '@/lib/engine/detrend';
import { RandomStream } from '@/lib/engine/random';

/**
 * A linear restoring model of a residual record on its own grid (time in grid steps):
 *   dX = −k(t)(X − μ) dt + σ dW,  k(t) = k0 + (k1 − k0)·t/(n − 1)  (floored at K_MIN),
 * i.e. an Ornstein–Uhlenbeck process whose restoring rate moves in a straight line from k0 at the start of the
 * record to k1 at its end. k1 = k0 is the constant-parameter null (an AR(1) on the grid); k1 near zero is a
 * system sliding towards a fold, whose restoring rate vanishes at the transition (the linearised approach to a
 * saddle-node used by Boettiger & Hastings 2012, Proc. R. Soc. B 279, 4734–4739, from memory).
 */
export interface RestoringModel {
  mu: number;
  sigma: number;
  k0: number;
  k1: number;
  n: number;
  logLikelihood: number;
}

/** Smallest restoring rate per step the fit and the simulation use (φ = e^{−k} ≤ 0.99999). */
const K_MIN = 1e-5;
/** Largest one (φ ≥ e^{−6}); faster restoring than that is white noise on this grid. */
const K_MAX = 6;

function rateAt(k0: number, k1: number, i: number, n: number): number {
  const k = n > 1 ? k0 + ((k1 - k0) * i) / (n - 1) : k0;
  return Math.min(K_MAX, Math.max(K_MIN, k));
}

/**
 * Profile log-likelihood of (k0, k1) with the exact one-step transition of the OU process, the rate held at
 * k_i over step i → i+1: x_{i+1} − μ = φ_i (x_i − μ) + e_i, φ_i = e^{−k_i}, Var e_i = σ² v_i,
 * v_i = (1 − φ_i²)/(2k_i); σ² profiled out as σ̂² = Σ e_i²/v_i /(n − 1), so
 * ℓ = −½[(n − 1)(log 2πσ̂² + 1) + Σ log v_i]. O(n). Source: the OU transition density, e.g. Gardiner (2009),
 * Stochastic Methods, 4th ed., Sec. 3.8.4 (from memory).
 */
function profile(x: Float64Array, mu: number, k0: number, k1: number): { ll: number; sigma2: number } {
  const n = x.length;
  let q = 0;
  let logV = 0;
  for (let i = 0; i + 1 < n; i++) {
    const k = rateAt(k0, k1, i, n);
    const phi = Math.exp(-k);
    const v = -Math.expm1(-2 * k) / (2 * k);
    const e = x[i + 1] - mu - phi * (x[i] - mu);
    q += (e * e) / v;
    logV += Math.log(v);
  }
  const m = n - 1;
  const sigma2 = q / m;
  return { ll: -0.5 * (m * (Math.log(2 * Math.PI * sigma2) + 1) + logV), sigma2 };
}

/**
 * Maximum-likelihood fit of the restoring model (profile over log k0, log k1; μ = the record's mean): a grid
 * of 33 × 33 log-rates over [K_MIN, K_MAX], then a compass search halving its step 24 times. With
 * `constant`, k1 = k0 (the null). Cost O(n · 1,200). Compass search: Kolda, Lewis & Torczon (2003), SIAM
 * Review 45, 385–482 (from memory).
 */
export function fitRestoringModel(x: Float64Array, options: { constant?: boolean } = {}): RestoringModel {
  const n = x.length;
  if (n < 3) throw new RangeError('a restoring model needs at least 3 points');
  const mu = accurateMean(x);
  const lo = Math.log(K_MIN);
  const hi = Math.log(K_MAX);
  const G = 33;
  const evaluate = (a: number, b: number) => profile(x, mu, Math.exp(a), Math.exp(options.constant ? a : b)).ll;
  let best = { a: lo, b: lo, ll: Number.NEGATIVE_INFINITY };
  for (let i = 0; i < G; i++) {
    const a = lo + ((hi - lo) * i) / (G - 1);
    for (let j = 0; j < (options.constant ? 1 : G); j++) {
      const b = options.constant ? a : lo + ((hi - lo) * j) / (G - 1);
      const ll = evaluate(a, b);
      if (ll > best.ll) best = { a, b, ll };
    }
  }
  let step = (hi - lo) / (G - 1);
  for (let round = 0; round < 24; round++) {
    let moved = true;
    while (moved) {
      moved = false;
      const moves = options.constant
        ? [
            [step, 0],
            [-step, 0],
          ]
        : [
            [step, 0],
            [-step, 0],
            [0, step],
            [0, -step],
          ];
      for (const [da, db] of moves) {
        const a = Math.min(hi, Math.max(lo, best.a + da));
        const b = options.constant ? a : Math.min(hi, Math.max(lo, best.b + db));
        const ll = evaluate(a, b);
        if (ll > best.ll + 1e-12) {
          best = { a, b, ll };
          moved = true;
        }
      }
    }
    step /= 2;
  }
  const k0 = Math.exp(best.a);
  const k1 = options.constant ? k0 : Math.exp(best.b);
  return { mu, sigma: Math.sqrt(profile(x, mu, k0, k1).sigma2), k0, k1, n, logLikelihood: best.ll };
}

/**
 * Replicate `index` of a restoring model, from its own random stream (seed, index): x_0 ~ N(μ, σ²/(2k_0))
 * (stationary at the start), then the exact OU step of profile(). O(n).
 */
export function simulateRestoring(model: RestoringModel, seed: number, index: number): Float64Array {
  const rng = new RandomStream(seed, index);
  const { n, mu, sigma, k0, k1 } = model;
  const out = new Float64Array(n);
  const kStart = rateAt(k0, k1, 0, n);
  let y = (sigma / Math.sqrt(2 * kStart)) * rng.normal();
  out[0] = mu + y;
  for (let i = 0; i + 1 < n; i++) {
    const k = rateAt(k0, k1, i, n);
    y = Math.exp(-k) * y + sigma * Math.sqrt(-Math.expm1(-2 * k) / (2 * k)) * rng.normal();
    out[i + 1] = mu + y;
  }
  return out;
}
