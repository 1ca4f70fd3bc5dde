import { RandomStream } from '@/lib/engine/random';

/**
 * Simulators of published models for the demo network. Pure: numbers in, typed arrays out, every random
 * draw from a seeded RandomStream, so the same options give byte-identical output on every machine.
 * Time is in each model's own nondimensional units; the scenario maps samples onto calendar instants.
 */

/** Where a simulator draws its numbers: stream `stream` of seed `seed` (see RandomStream). */
export interface Seeded {
  seed: number;
  stream?: number;
}

/** A stochastic run recorded at n samples dt apart, with `substeps` integration steps between samples. */
export interface SdeGrid extends Seeded {
  n: number;
  dt: number;
  substeps: number;
}

/** The two parts of dx = a(x, t) dt + b(x) dW. */
export interface Dynamics {
  drift: (x: number, t: number) => number;
  diffusion: (x: number) => number;
}

/** A run whose control parameter ramps linearly through a saddle-node fold of the model's deterministic part. */
export interface ForcedRun {
  values: Float64Array;
  /** The control parameter at each sample. */
  forcing: Float64Array;
  /** Model time at which the forcing reaches the fold (may lie beyond the record). */
  foldTime: number;
  /** The same instant as a fractional sample index, foldTime / dt. */
  foldIndex: number;
}

/**
 * Euler–Maruyama scheme for dx = a(x, t) dt + b(x) dW:
 * x_{k+1} = x_k + a(x_k, t_k)·h + b(x_k)·√h·Z_k, with h = dt/substeps and Z_k standard normal.
 * Sample i is x at t = i·dt (sample 0 is x0). Strong order 1/2, weak order 1.
 * Cost O(n·substeps). Source: Kloeden & Platen (1992), Numerical Solution of Stochastic Differential
 * Equations, Springer, Sec. 10.2.
 */
export function eulerMaruyama(drift: (x: number, t: number) => number, diffusion: (x: number) => number, x0: number, grid: SdeGrid): Float64Array {
  const { n, dt, substeps } = grid;
  if (!(n > 0 && dt > 0 && substeps >= 1)) throw new RangeError('eulerMaruyama needs n > 0, dt > 0 and substeps ≥ 1');
  const rng = new RandomStream(grid.seed, grid.stream ?? 0);
  const out = new Float64Array(n);
  out[0] = x0;
  for (let i = 1; i < n; i++) out[i] = eulerMaruyamaSample(drift, diffusion, out[i - 1], (i - 1) * dt, dt, substeps, rng);
  return out;
}

/**
 * One sample interval of the Euler–Maruyama scheme (see eulerMaruyama): from x at model time t0, `substeps` steps
 * of h = dt/substeps, each drawing one normal deviate from `rng`. The whole-record simulator and the live demo
 * feed (which continues a stored record one sample at a time) share it. Cost O(substeps). Source: as eulerMaruyama.
 */
export function eulerMaruyamaSample(
  drift: (x: number, t: number) => number,
  diffusion: (x: number) => number,
  x: number,
  t0: number,
  dt: number,
  substeps: number,
  rng: RandomStream,
): number {
  const h = dt / substeps;
  const sqrtH = Math.sqrt(h);
  for (let k = 0; k < substeps; k++) x += drift(x, t0 + k * h) * h + diffusion(x) * sqrtH * rng.normal();
  return x;
}

/**
 * Root of a continuous g on [lo, hi] with g(lo), g(hi) of opposite signs, by bisection until the bracket
 * stops shrinking in double precision (at most ~1100 halvings). Cost O(log((hi − lo)/ε)).
 * Source: Press et al. (2007), Numerical Recipes, 3rd ed., Sec. 9.1.
 */
function bisect(g: (x: number) => number, lo: number, hi: number): number {
  let glo = g(lo);
  if (glo === 0) return lo;
  if (glo * g(hi) > 0) throw new RangeError(`no sign change of the function on [${lo}, ${hi}]`);
  for (;;) {
    const mid = lo + (hi - lo) / 2;
    if (mid <= lo || mid >= hi) return mid;
    const gm = g(mid);
    if (gm === 0) return mid;
    if (gm * glo < 0) hi = mid;
    else {
      lo = mid;
      glo = gm;
    }
  }
}

function linearRamp(n: number, dt: number, start: number, rate: number): Float64Array {
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = start + rate * i * dt;
  return out;
}

// ---------------------------------------------------------------------------------------------------------
// Cessi's two-box thermohaline model

/**
 * Deterministic relaxation term of Cessi's model, f(y) = y·(1 + μ²(1 − y)²): the salinity difference y is
 * restored by diffusion (y) and by the circulation, whose strength grows with (1 − y)². O(1).
 * Source: Cessi (1994), "A simple box model of stochastically forced thermohaline flow",
 * J. Phys. Oceanogr. 24, 1911–1920.
 */
export function cessiRelaxation(y: number, mu2: number): number {
  const d = 1 - y;
  return y * (1 + mu2 * d * d);
}

/**
 * The two saddle-node folds of dy/dt = p − f(y), where p = f(y) and f'(y) = 0.
 * f'(y) = 1 + μ²(1 − y)(1 − 3y) = 0 ⇔ 3μ²y² − 4μ²y + μ² + 1 = 0 ⇔ y± = (2 ± √(1 − 3/μ²))/3,
 * real only for μ² > 3 (bistability). The fold met as p rises is at y− (the end of the low-salinity,
 * circulation-dominated branch y < y−), at p = f(y−); the fold met as p falls is at y+, p = f(y+).
 * O(1). Derived here from Cessi's (1994) equation with the saddle-node conditions of Strogatz (1994),
 * Nonlinear Dynamics and Chaos, Sec. 3.1.
 */
export function cessiFolds(mu2: number): { rising: { y: number; p: number }; falling: { y: number; p: number } } {
  if (!(mu2 > 3)) throw new RangeError(`Cessi's model is bistable only for μ² > 3 (got ${mu2})`);
  const s = Math.sqrt(1 - 3 / mu2);
  const yRise = (2 - s) / 3;
  const yFall = (2 + s) / 3;
  return {
    rising: { y: yRise, p: cessiRelaxation(yRise, mu2) },
    falling: { y: yFall, p: cessiRelaxation(yFall, mu2) },
  };
}

/**
 * The stable equilibrium on the low branch, the root of f(y) = p on [0, y−] (f rises monotonically
 * there), for 0 ≤ p ≤ p_fold. Cost O(log 1/ε) by bisection. Source: as cessiFolds.
 */
export function cessiLowBranch(p: number, mu2: number): number {
  const { rising } = cessiFolds(mu2);
  if (!(p >= 0 && p <= rising.p)) throw new RangeError(`p = ${p} is outside the low branch [0, ${rising.p}]`);
  return bisect((y) => cessiRelaxation(y, mu2) - p, 0, rising.y);
}

export interface CessiOptions extends SdeGrid {
  /** μ², the ratio of the diffusive to the advective time scale. */
  mu2: number;
  /** Freshwater forcing at t = 0 (below the rising fold). */
  p0: number;
  /** dp/dt of the linear ramp p(t) = p0 + rate·t. */
  rate: number;
  /** Amplitude of the white-noise part of the freshwater forcing. */
  sigma: number;
}

/** Drift and diffusion of the forced Cessi model (see simulateCessi), for whole runs and one-sample steps alike. */
export function cessiDynamics(o: Omit<CessiOptions, keyof SdeGrid>): Dynamics {
  return { drift: (y, t) => o.p0 + o.rate * t - cessiRelaxation(y, o.mu2), diffusion: () => o.sigma };
}

/**
 * Cessi's nondimensional two-box model with a slowly rising freshwater forcing and additive noise:
 * dy = [p(t) − y(1 + μ²(1 − y)²)] dt + σ dW, p(t) = p0 + rate·t, started on the low-branch equilibrium of p0.
 * The linearised restoring rate f'(y*) falls to zero as p → p_fold (critical slowing down); the fold
 * instant is t_fold = (p_fold − p0)/rate. Integration: Euler–Maruyama (see eulerMaruyama).
 * Cost O(n·substeps). Source: Cessi (1994), J. Phys. Oceanogr. 24, 1911–1920 (model and stochastic
 * forcing); the linear ramp is our own choice.
 */
export function simulateCessi(o: CessiOptions): ForcedRun {
  const { rising } = cessiFolds(o.mu2);
  const { drift, diffusion } = cessiDynamics(o);
  const values = eulerMaruyama(drift, diffusion, cessiLowBranch(o.p0, o.mu2), o);
  const foldTime = (rising.p - o.p0) / o.rate;
  return { values, forcing: linearRamp(o.n, o.dt, o.p0, o.rate), foldTime, foldIndex: foldTime / o.dt };
}

// ---------------------------------------------------------------------------------------------------------
// May's harvested (grazed) population

export interface GrazingParameters {
  /** Intrinsic growth rate. */
  r: number;
  /** Carrying capacity. */
  K: number;
  /** Biomass at which consumption reaches half its maximum. */
  h: number;
}

/**
 * Net growth of May's grazed population, g(x, c) = r·x(1 − x/K) − c·x²/(x² + h²): logistic growth less a
 * saturating (Holling type III) harvest at maximum rate c. O(1).
 * Source: May (1977), "Thresholds and breakpoints in ecosystems with a multiplicity of stable states",
 * Nature 269, 471–477.
 */
function grazingGrowth(x: number, c: number, q: GrazingParameters): number {
  return q.r * x * (1 - x / q.K) - (c * x * x) / (x * x + q.h * q.h);
}

/** Harvest rate that holds x > 0 in equilibrium: c(x) = r(1 − x/K)(x² + h²)/x. O(1). Source: as grazingGrowth. */
export function grazingEquilibriumRate(x: number, q: GrazingParameters): number {
  return (q.r * (1 - x / q.K) * (x * x + q.h * q.h)) / x;
}

/**
 * The folds of the grazing model: the turning points of c(x), where dc/dx = 0 ⇔ 2x³ − Kx² + Kh² = 0.
 * That cubic is decreasing on (0, K/3) and increasing on (K/3, ∞), with q(0) = q(K/2) = Kh² > 0 and
 * q(K/3) = K(h² − K²/27), so there are two positive roots (and bistability) exactly when K > 3√3·h.
 * The larger root (in (K/3, K/2)) is the local maximum of c(x): as c rises past c(x) there the
 * well-stocked branch ends (collapse). The smaller root is the local minimum: as c falls below it the
 * depleted branch ends (recovery). Cost O(log 1/ε) by bisection. Derived here from May's (1977) equation;
 * the condition K > 3√3·h matches Ludwig, Jones & Holling (1978), J. Anim. Ecol. 47, 315–332 (from memory).
 */
export function grazingFolds(q: GrazingParameters): { collapse: { x: number; c: number }; recovery: { x: number; c: number } } {
  if (!(q.K > 3 * Math.sqrt(3) * q.h)) throw new RangeError(`the grazing model is bistable only for K > 3√3·h (K = ${q.K}, h = ${q.h})`);
  const cubic = (x: number) => 2 * x * x * x - q.K * x * x + q.K * q.h * q.h;
  const xRecovery = bisect(cubic, 0, q.K / 3);
  const xCollapse = bisect(cubic, q.K / 3, q.K / 2);
  return {
    collapse: { x: xCollapse, c: grazingEquilibriumRate(xCollapse, q) },
    recovery: { x: xRecovery, c: grazingEquilibriumRate(xRecovery, q) },
  };
}

/**
 * A stable equilibrium for harvest rate c: on the well-stocked branch the root of c(x) = c on
 * [x_collapse, K] (for c ≤ c_collapse), on the depleted branch the root on (0, x_recovery] (for
 * c ≥ c_recovery); c(x) is monotone on both. Cost O(log 1/ε). Source: as grazingFolds.
 */
export function grazingEquilibrium(c: number, q: GrazingParameters, branch: 'stocked' | 'depleted'): number {
  const folds = grazingFolds(q);
  const g = (x: number) => grazingEquilibriumRate(x, q) - c;
  if (branch === 'stocked') {
    if (!(c >= 0 && c <= folds.collapse.c)) throw new RangeError(`c = ${c} is outside the well-stocked branch [0, ${folds.collapse.c}]`);
    return bisect(g, folds.collapse.x, q.K);
  }
  if (!(c >= folds.recovery.c)) throw new RangeError(`c = ${c} is below the depleted branch (c ≥ ${folds.recovery.c})`);
  return bisect(g, Number.MIN_VALUE, folds.recovery.x);
}

export interface GrazingOptions extends SdeGrid, GrazingParameters {
  /** Harvest rate at t = 0 (below the collapse fold). */
  c0: number;
  /** dc/dt of the linear ramp c(t) = c0 + rate·t. */
  rate: number;
  /** Environmental noise on the growth rate (multiplicative: σ·x dW). */
  sigma: number;
}

/** Drift and diffusion of the forced grazing model (see simulateGrazing), for whole runs and one-sample steps alike. */
export function grazingDynamics(o: Omit<GrazingOptions, keyof SdeGrid>): Dynamics {
  return { drift: (x, t) => grazingGrowth(x, o.c0 + o.rate * t, o), diffusion: (x) => o.sigma * x };
}

/**
 * May's grazing model with a rising harvest rate and multiplicative environmental noise:
 * dx = [r x(1 − x/K) − c(t) x²/(x² + h²)] dt + σ x dW, c(t) = c0 + rate·t, started on the well-stocked
 * equilibrium of c0. The stock collapses to the depleted branch after c passes c_collapse
 * (t_fold = (c_collapse − c0)/rate). Multiplicative noise keeps x > 0 (a step would need Z < −1/(σ√h)).
 * Integration: Euler–Maruyama. Cost O(n·substeps). Source: May (1977), Nature 269, 471–477; the ramp
 * and the noise form are our own choices (common practice in early-warning studies).
 */
export function simulateGrazing(o: GrazingOptions): ForcedRun {
  const { collapse } = grazingFolds(o);
  const { drift, diffusion } = grazingDynamics(o);
  const values = eulerMaruyama(drift, diffusion, grazingEquilibrium(o.c0, o, 'stocked'), o);
  const foldTime = (collapse.c - o.c0) / o.rate;
  return { values, forcing: linearRamp(o.n, o.dt, o.c0, o.rate), foldTime, foldIndex: foldTime / o.dt };
}

// ---------------------------------------------------------------------------------------------------------
// Stationary AR(1), and the series built on it

export interface Ar1Options extends Seeded {
  n: number;
  /** Lag-1 coefficient, |phi| < 1. */
  phi: number;
  /** Innovation standard deviation. */
  sigma: number;
  mean?: number;
}

/**
 * Stationary Gaussian AR(1): x_0 ~ N(0, σ²/(1 − φ²)), x_t = φ x_{t−1} + σ ε_t, plus the mean. Exact (no
 * discretisation): the stationary start makes every x_t ~ N(mean, σ²/(1 − φ²)), with lag-k autocorrelation φ^k.
 * Cost O(n). Source: Box, Jenkins, Reinsel & Ljung (2015), Time Series Analysis, 5th ed., Sec. 3.2.
 */
export function simulateAr1(o: Ar1Options): Float64Array {
  return ar1From(new RandomStream(o.seed, o.stream ?? 0), o);
}

function ar1From(rng: RandomStream, o: Ar1Options): Float64Array {
  if (!(Math.abs(o.phi) < 1)) throw new RangeError(`a stationary AR(1) needs |phi| < 1 (got ${o.phi})`);
  const mean = o.mean ?? 0;
  const out = new Float64Array(o.n);
  let x = (o.sigma / Math.sqrt(1 - o.phi * o.phi)) * rng.normal();
  for (let t = 0; t < o.n; t++) {
    if (t > 0) x = o.phi * x + o.sigma * rng.normal();
    out[t] = mean + x;
  }
  return out;
}

export interface DriftOptions extends Ar1Options {
  /** Sensor drift added per sample (linear in time). */
  driftPerSample: number;
}

/**
 * A stationary AR(1) signal read through a sensor drifting linearly: x_t = AR(1)_t + driftPerSample·t.
 * The drift changes the level only, never the variance or autocorrelation of the residual about a fitted
 * line, so after linear detrending it should raise no early warning. Cost O(n). Source: AR(1) as
 * simulateAr1; linear drift as a model of sensor ageing is common practice.
 */
export function simulateDrift(o: DriftOptions): Float64Array {
  const out = simulateAr1(o);
  for (let t = 0; t < out.length; t++) out[t] += o.driftPerSample * t;
  return out;
}

export interface SeasonalOptions extends Ar1Options {
  /** Amplitude of the annual sinusoid. */
  amplitude: number;
  /** Samples per cycle (365.2425 for daily data and the mean Gregorian year). */
  samplesPerCycle: number;
  /** Phase of sample 0 as a fraction of the cycle; the sinusoid peaks at phase 0.25. */
  phaseAtStart: number;
  /** Probability per sample of a short gap starting there. */
  shortGapRate: number;
  /** Longest short gap (samples). */
  maxShortGap: number;
  /** One long gap, or null. */
  longGap: { start: number; length: number } | null;
}

/**
 * Annual cycle plus AR(1) weather noise, with missing samples:
 * x_t = mean + A·sin(2π(phaseAtStart + t/samplesPerCycle)) + AR(1)_t, and NaN where the sample is missing.
 * Gaps: the one long gap, plus short gaps of 1..maxShortGap samples started with probability shortGapRate
 * at each sample, never touching another gap or either end of the record (so each stays a gap of its own
 * length). Noise first, then gaps, from the same stream. Cost O(n). Source: AR(1) as simulateAr1; a
 * sinusoidal annual cycle over red noise is common practice for daily environmental records.
 */
export function simulateSeasonal(o: SeasonalOptions): Float64Array {
  const rng = new RandomStream(o.seed, o.stream ?? 0);
  const out = ar1From(rng, o);
  const n = out.length;
  for (let t = 0; t < n; t++) out[t] += o.amplitude * Math.sin(2 * Math.PI * (o.phaseAtStart + t / o.samplesPerCycle));
  if (o.longGap && !(o.longGap.start >= 1)) throw new RangeError('the long gap must leave the first sample in place');
  if (o.longGap) out.fill(Number.NaN, o.longGap.start, Math.min(n - 1, o.longGap.start + o.longGap.length));
  for (let t = 1; t < n - 1; t++) {
    if (!(rng.uniform() < o.shortGapRate)) continue;
    const length = 1 + Math.floor(rng.uniform() * o.maxShortGap);
    if (t + length >= n - 1) continue;
    let clear = true;
    for (let k = t - 1; k <= t + length; k++) if (Number.isNaN(out[k])) clear = false;
    if (!clear) continue;
    out.fill(Number.NaN, t, t + length);
    t += length;
  }
  return out;
}

// ---------------------------------------------------------------------------------------------------------
// Double-well energy-balance model

export interface DoubleWellOptions extends SdeGrid {
  /** Amplitude of the periodic forcing (below the static threshold 2/(3√3) ≈ 0.385, so it cannot tip alone). */
  amplitude: number;
  /** Period of the forcing, in model time. */
  period: number;
  sigma: number;
  x0: number;
}

/**
 * Bistable climate (energy-balance) model in its normal form: dx = [x − x³ + A sin(2πt/P)] dt + σ dW, the
 * gradient flow of U(x) = x⁴/4 − x²/2 (wells at ±1, barrier ΔU = 1/4) with weak periodic forcing. Noise
 * kicks it between the wells (flickering); with A below 2/(3√3) neither well vanishes. Integration:
 * Euler–Maruyama. Cost O(n·substeps). Sources: Benzi, Sutera & Vulpiani (1981), "The mechanism of
 * stochastic resonance", J. Phys. A 14, L453–L457; the quartic normal form is common practice.
 */
export function simulateDoubleWell(o: DoubleWellOptions): Float64Array {
  const { drift, diffusion } = doubleWellDynamics(o);
  return eulerMaruyama(drift, diffusion, o.x0, o);
}

/** Drift and diffusion of the forced double well (see simulateDoubleWell), for whole runs and one-sample steps alike. */
export function doubleWellDynamics(o: Pick<DoubleWellOptions, 'amplitude' | 'period' | 'sigma'>): Dynamics {
  const omega = (2 * Math.PI) / o.period;
  return { drift: (x, t) => x - x * x * x + o.amplitude * Math.sin(omega * t), diffusion: () => o.sigma };
}
