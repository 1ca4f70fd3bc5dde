/** One abrupt shift of level. */
export interface LevelShift {
  /** Grid index of the first observed point of the new level (0-based). */
  index: number;
  /**
   * The jump of level at the shift: the new level's local line minus the old level's, both read halfway between
   * the last old and the first new grid point (observed points only; see shiftScan).
   */
  size: number;
}

export interface ShiftOptions {
  /** Fewest observed points in each window either side of a shift, and the smallest bandwidth; default DEFAULT_MIN_SEGMENT. */
  minSegment?: number;
  /** Chance per record of reporting a shift where there is none; a calibrated rate in [0.01, 0.1], default 0.01. */
  falsePositiveRate?: number;
}

/** Default fewest observed points in each window either side of a shift. */
export const DEFAULT_MIN_SEGMENT = 5;

/**
 * Bandwidth G = round(BANDWIDTH_FACTOR · √n) grid points for an n-point record. G must grow more slowly than n
 * (Eichinger & Kirch 2018 need G/n → 0 and G → ∞; √n is our own choice within that). The factor 3 balances what
 * each side costs: a longer window gives a step more weight (the jump's standard error falls as √(8/G)), but lets
 * a curving equilibrium (an approach to a fold) bend away from the windows' straight lines. With it, a step of three
 * long-run sd in a 200-point record stands about 7 standard errors above zero.
 */
export const BANDWIDTH_FACTOR = 4;

/**
 * Each side's noise scale (long-run variance) is fitted over SCALE_FACTOR · G points on that side, not just the G
 * points of the jump's own line: a 42-point window of AR(1) noise with φ = 0.95 holds about one effective
 * observation, and a noise scale from so few makes the statistic heavy-tailed (the false-positive rate then
 * depended on φ; with three bandwidths it hardly does; tests/reference/calibrate_shifts.ts).
 */
const SCALE_FACTOR = 3;

/** Largest lag-1 coefficient the noise model takes; beyond it σ²_LR ∝ 1/(1 − φ)² is too unstable to use. */
const PHI_MAX = 0.99;

/**
 * Threshold constants c(α) of the scan (see shiftThreshold), from tests/reference/calibrate_shifts.ts
 * (fixtures/reference/shift_calibration.json): for each null record the normalised maximum
 * a(n/G)·max_t T_t − b(n/G) was computed, and c(α) is the largest (1 − α) quantile of it over 24 cells —
 * stationary AR(1) with φ = 0, 0.5, 0.8, 0.9, 0.95; two slowing-down nulls (φ 0.2→0.95; φ 0.5→0.95 with sd
 * 1→2); two approaches to a fold (Cessi's 1994 box model and May's 1977 grazing model, forcing ramped to just
 * short of the fold), at n = 200 (1,000 records each), 1,000 (400) and 5,000 (150); minSegment 5.
 */
export const SHIFT_THRESHOLD_CONSTANTS: readonly { rate: number; constant: number }[] = [
  { rate: 0.01, constant: 4.85 },
  { rate: 0.05, constant: 3.6 },
  { rate: 0.1, constant: 3.1 },
];

/** Bandwidth G (grid points) of the scan for an n-point record: max(minSegment, round(BANDWIDTH_FACTOR·√n)). O(1). */
export function shiftBandwidth(n: number, minSegment = DEFAULT_MIN_SEGMENT): number {
  return Math.max(minSegment, Math.round(BANDWIDTH_FACTOR * Math.sqrt(n)));
}

/**
 * Scale a(x) = √(2 ln x) and centre b(x) = 2 ln x + ½ ln ln x − ½ ln π of the maximum of a moving-window
 * statistic over x = n/G bandwidths: (max_t T_t)·a − b has a Gumbel limit (Eichinger & Kirch 2018, Theorem 2.1,
 * from memory; the additive constant of their b, which depends on the window's kernel, is left to the calibrated
 * c(α)). x ≥ 2 here (the scan needs n ≥ 2G). O(1).
 */
export function scanNormalisation(x: number): { a: number; b: number } {
  const l = Math.log(x);
  return { a: Math.sqrt(2 * l), b: 2 * l + 0.5 * Math.log(l) - 0.5 * Math.log(Math.PI) };
}

/**
 * Threshold constant c(α) for a false-positive rate: the calibrated constants at their rates, log-linear in the
 * rate between them; rates outside the calibrated range are refused (RangeError). O(1).
 */
export function shiftThresholdConstant(rate: number): number {
  const table = SHIFT_THRESHOLD_CONSTANTS;
  for (let i = 0; i < table.length; i++) {
    if (rate === table[i].rate) return table[i].constant;
    if (i + 1 < table.length && rate > table[i].rate && rate < table[i + 1].rate) {
      const f = Math.log(rate / table[i].rate) / Math.log(table[i + 1].rate / table[i].rate);
      return table[i].constant + f * (table[i + 1].constant - table[i].constant);
    }
  }
  throw new RangeError(`falsePositiveRate ${rate} is outside the calibrated range [${table[0].rate}, ${table[table.length - 1].rate}]`);
}

/** Threshold on T_t for an n-point record scanned at bandwidth G: (b(n/G) + c(α)) / a(n/G) (see scanNormalisation). O(1). */
export function shiftThreshold(n: number, bandwidth: number, constant: number): number {
  const { a, b } = scanNormalisation(n / bandwidth);
  return (b + constant) / a;
}

/** The scan of a record: its bandwidth, and at each grid point the standardised jump T_t and the jump D_t (NaN where not judged). */
export interface ShiftScan {
  bandwidth: number;
  statistic: Float64Array;
  jump: Float64Array;
}

/** Prefix sums over observed points (NaN skipped) that give any window's line fit and noise scale in O(1). */
interface PrefixSums {
  centre: number;
  count: Float64Array;
  sumK: Float64Array;
  sumKK: Float64Array;
  sumY: Float64Array;
  sumKY: Float64Array;
  sumYY: Float64Array;
  /** neighbouring pairs (k − 1, k) both observed, counted at k, and the sum of their squared differences */
  pairs: Float64Array;
  sumDD: Float64Array;
}

function prefixSums(x: Float64Array): PrefixSums {
  const n = x.length;
  // Values about the first observed one, so a large offset costs no digits.
  let centre = Number.NaN;
  for (let i = 0; i < n && Number.isNaN(centre); i++) centre = x[i];
  const s = {
    centre,
    count: new Float64Array(n + 1),
    sumK: new Float64Array(n + 1),
    sumKK: new Float64Array(n + 1),
    sumY: new Float64Array(n + 1),
    sumKY: new Float64Array(n + 1),
    sumYY: new Float64Array(n + 1),
    pairs: new Float64Array(n + 1),
    sumDD: new Float64Array(n + 1),
  };
  let prev = Number.NaN;
  for (let k = 0; k < n; k++) {
    const y = x[k] - centre;
    const seen = !Number.isNaN(y);
    const d = y - prev;
    const pair = !Number.isNaN(d);
    s.count[k + 1] = s.count[k] + (seen ? 1 : 0);
    s.sumK[k + 1] = s.sumK[k] + (seen ? k : 0);
    s.sumKK[k + 1] = s.sumKK[k] + (seen ? k * k : 0);
    s.sumY[k + 1] = s.sumY[k] + (seen ? y : 0);
    s.sumKY[k + 1] = s.sumKY[k] + (seen ? k * y : 0);
    s.sumYY[k + 1] = s.sumYY[k] + (seen ? y * y : 0);
    s.pairs[k + 1] = s.pairs[k] + (pair ? 1 : 0);
    s.sumDD[k + 1] = s.sumDD[k] + (pair ? d * d : 0);
    prev = y;
  }
  return s;
}

/**
 * Least-squares line over the observed points of grid window [a, b), read at position u: its value (about the
 * centre), the variance factor v = 1/m + (u − k̄)²/S_kk of that value per unit noise variance, and the AR(1)
 * long-run variance of the noise about the line, σ̂²_y (1 + φ̂)/(1 − φ̂), with σ̂²_y = RSS/(m − 2) and φ̂ from the
 * mean squared difference of observed neighbours, E(Δx)² = 2σ²_y(1 − φ) + slope² (von Neumann's ratio), clamped
 * to [0, PHI_MAX]. Null when the window holds fewer than `least` observed points. O(1).
 */
function windowLine(s: PrefixSums, a: number, b: number, u: number, least: number): { value: number; v: number; lrv: number } | null {
  const m = s.count[b] - s.count[a];
  if (m < least) return null;
  const sk = s.sumK[b] - s.sumK[a];
  const sy = s.sumY[b] - s.sumY[a];
  const kbar = sk / m;
  const skk = s.sumKK[b] - s.sumKK[a] - sk * kbar;
  const sky = s.sumKY[b] - s.sumKY[a] - kbar * sy;
  const syy = s.sumYY[b] - s.sumYY[a] - (sy * sy) / m;
  const slope = skk > 0 ? sky / skk : 0;
  const variance = Math.max(0, syy - slope * sky) / (m - 2);
  const p = s.pairs[b] - s.pairs[a + 1];
  const meanSquareDiff = p > 0 ? Math.max(0, (s.sumDD[b] - s.sumDD[a + 1]) / p - slope * slope) : 2 * variance;
  const phi = variance > 0 ? Math.min(PHI_MAX, Math.max(0, 1 - meanSquareDiff / (2 * variance))) : 0;
  return {
    value: sy / m + slope * (u - kbar),
    v: 1 / m + (skk > 0 ? ((u - kbar) * (u - kbar)) / skk : 0),
    lrv: (variance * (1 + phi)) / (1 - phi),
  };
}

/**
 * Standardised local jump of level at every grid point t: a straight line is fitted by least squares to the
 * observed points of the G grid points before t and to those of the G points from t on (fewer, down to ⌈G/2⌉,
 * near either end of the record), both are read at t − ½, and
 *   D_t = line_right(t − ½) − line_left(t − ½),   T_t = |D_t| / √(σ̂²_L v_L + σ̂²_R v_R),
 * where v is each line's variance factor at t − ½ and σ̂² each side's AR(1) long-run variance, fitted about a line
 * over the SCALE_FACTOR·G grid points on that side (see windowLine). Because each side has its own line, a level
 * that drifts smoothly (a linear trend exactly, a curving one up to its curvature times G²) gives D_t ≈ 0, while a
 * step of size δ gives D_t ≈ δ; because each side has its own noise scale, rising variance and memory (as before a
 * fold) are judged against themselves. Points where either side has fewer than max(minSegment, 4) observed points,
 * or no noise, are not judged (NaN). A moving-window (MOSUM) scan in the sense of Eichinger & Kirch (2018), with
 * local-linear rather than local-mean windows so that smooth drift is not mistaken for a shift.
 * Cost O(n) time and memory (prefix sums). Sources: Eichinger & Kirch (2018), "A MOSUM procedure for the
 * estimation of multiple random change points", Bernoulli 24, 526–564 (from memory); Fan & Gijbels (1996),
 * Local Polynomial Modelling and Its Applications, Sec. 3.2 (one-sided local-linear fits at a boundary, from
 * memory); von Neumann (1941), Ann. Math. Stat. 12, 367–395 (mean square successive difference, from memory);
 * Andrews (1991), Econometrica 59, 817–858 (AR(1) plug-in long-run variance, from memory).
 */
export function shiftScan(x: Float64Array, minSegment = DEFAULT_MIN_SEGMENT): ShiftScan {
  if (!(Number.isInteger(minSegment) && minSegment >= 1)) throw new RangeError(`minSegment must be a positive integer (got ${minSegment})`);
  const n = x.length;
  const G = shiftBandwidth(n, minSegment);
  const statistic = new Float64Array(n).fill(Number.NaN);
  const jump = new Float64Array(n).fill(Number.NaN);
  if (n < 2 * G) return { bandwidth: G, statistic, jump };
  const s = prefixSums(x);
  const least = Math.max(minSegment, 4);
  const S = SCALE_FACTOR * G;
  // A shorter old-level window only at the record's start (see the doc comment).
  for (let t = Math.ceil(G / 2); t + G <= n; t++) {
    const u = t - 0.5;
    const left = windowLine(s, Math.max(0, t - G), t, u, least);
    const right = windowLine(s, t, Math.min(n, t + G), u, least);
    if (left === null || right === null) continue;
    const leftScale = windowLine(s, Math.max(0, t - S), t, u, least)!;
    const rightScale = windowLine(s, t, Math.min(n, t + S), u, least)!;
    const variance = Math.max(left.lrv, leftScale.lrv) * left.v + Math.max(right.lrv, rightScale.lrv) * right.v;
    if (!(variance > 0)) continue;
    jump[t] = right.value - left.value;
    statistic[t] = Math.abs(jump[t]) / Math.sqrt(variance);
  }
  return { bandwidth: G, statistic, jump };
}

/**
 * Largest value of v over [t − h, t + h] (clipped to the array) at every t, NaN counted as −∞, with a monotone
 * queue of candidate positions. O(n). Common practice (sliding-window maximum).
 */
function windowMaxima(v: Float64Array, h: number): Float64Array {
  const n = v.length;
  const out = new Float64Array(n);
  const queue = new Int32Array(n);
  let head = 0;
  let tail = 0;
  let next = 0;
  const value = (k: number) => (Number.isNaN(v[k]) ? -Infinity : v[k]);
  for (let t = 0; t < n; t++) {
    for (; next < n && next <= t + h; next++) {
      while (tail > head && value(queue[tail - 1]) <= value(next)) tail--;
      queue[tail++] = next;
    }
    while (queue[head] < t - h) head++;
    out[t] = value(queue[head]);
  }
  return out;
}

/**
 * Abrupt shifts of level in a series on a regular grid. NaN marks a missing point and is skipped in every sum
 * (so either the raw grid with NaN or the gap-filled grid may be passed; filled points count as observed); a
 * shift is reported at the first observed point of its new level.
 *
 * Model: x_t = μ_t + e_t, where the level μ may drift smoothly and jump, and e is AR(1)-like noise whose variance
 * and memory may change slowly. The local-linear jump scan T_t (shiftScan, bandwidth G = round(3√n)) is compared
 * with the threshold (b(n/G) + c(α))/a(n/G) (shiftThreshold); each t where T_t exceeds it and is the largest
 * within G grid points either side is a shift (the local-maximum rule of Eichinger & Kirch 2018, from memory),
 * and size = D_t there. c(α) was calibrated by simulation so that at most a share α of null records — stationary
 * AR(1) with φ up to 0.95, records whose φ and variance rise as before a fold, and simulated approaches to a fold
 * of Cessi's (1994) and May's (1977) models, n from 200 to 5,000 — report any shift (SHIFT_THRESHOLD_CONSTANTS).
 * A shift within ⌈G/2⌉ points of either end of the record cannot be seen yet; it is found once enough of the new
 * level has been recorded.
 *
 * Cost O(n) time and memory. Sources: Eichinger & Kirch (2018), Bernoulli 24, 526–564 (moving-window scan,
 * threshold form and local-maximum rule, from memory); the sources of shiftScan.
 */
export function detectShifts(x: Float64Array, options: ShiftOptions = {}): LevelShift[] {
  const constant = shiftThresholdConstant(options.falsePositiveRate ?? 0.01);
  const { bandwidth: G, statistic, jump } = shiftScan(x, options.minSegment ?? DEFAULT_MIN_SEGMENT);
  const n = x.length;
  if (n < 2 * G) return [];
  const threshold = shiftThreshold(n, G, constant);
  const peaks = windowMaxima(statistic, G);
  const shifts: LevelShift[] = [];
  let last = -Infinity;
  for (let t = 0; t < n; t++) {
    const T = statistic[t];
    // A shift where T_t is the largest within G either side (the first of equal maxima).
    if (!(T > threshold && T === peaks[t] && t - last > G)) continue;
    last = t;
    let index = t;
    while (Number.isNaN(x[index])) index++;
    shifts.push({ index, size: jump[t] });
  }
  return shifts;
}
