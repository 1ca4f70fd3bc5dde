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
  /** Fewest observed points in each window either side of a shift, and the smallest bandwidth; default DEFAULT_MIN_SEGMENT (the calibrated one). */
  minSegment?: number;
  /** Chance per record of reporting a shift where there is none; a calibrated rate in [0.01, 0.1], default 0.01. */
  falsePositiveRate?: number;
}

/** Default fewest observed points in each window either side of a shift. */
export const DEFAULT_MIN_SEGMENT = 5;

/**
 * Bandwidth G = round(BANDWIDTH_FACTOR · √n) grid points for an n-point record. G must grow more slowly than n
 * (Eichinger & Kirch 2018 need G/n → 0 and G → ∞; √n is our own choice within that). A longer window gives a step
 * more weight (the jump's standard error falls as √(8/G) long-run sd) but lets a curving equilibrium (an approach
 * to a fold) bend away from the windows' straight lines. Factors 3, 3.5 and 4 calibrated to similar constants
 * (tests/reference/calibrate_shifts.ts); 4 was kept for power: a step of three long-run sd in a 200-point record
 * stands about 8 standard errors above zero, and the Nile record's shift 28 years into 100 is found at α = 0.05.
 */
const BANDWIDTH_FACTOR = 4;

/**
 * Each side's noise scale (long-run variance) is also fitted over SCALE_FACTOR · G points on that side, not just
 * the G points of the jump's own line, and the larger taken: a 57-point window of AR(1) noise with φ = 0.95 holds
 * only a few effective observations, and a noise scale from so few makes the statistic heavy-tailed (with G points
 * alone the 99 % point of the scan maximum rose from 4 at φ = 0 to 7 at φ = 0.95; with the wider window it hardly
 * depends on φ). The larger of the two keeps a scale that rises within the wider window (slowing down).
 */
const SCALE_FACTOR = 3;

/** Largest lag-1 coefficient the noise model takes; beyond it σ²_LR ∝ 1/(1 − φ)² is too unstable to use. */
const PHI_MAX = 0.99;

/**
 * Share of the false-positive rate α spent on the end zone (the last G grid points, where the new level's window
 * is still short): Bonferroni's split, α = (1 − END_SHARE)·α + END_SHARE·α, so the record's rate stays at most α
 * whatever the dependence between the zones. A fifth: enough to see a large shift soon after it happens, while the
 * interior, which decides on moderate shifts, keeps most of α. Our own choice.
 */
export const END_SHARE = 0.2;

/**
 * Threshold constants of the scan at each calibrated false-positive rate α (see shiftThreshold): `interior`, c(α)
 * of the normalised interior maximum a(n/G)·max T_t − b(n/G), and `end`, the threshold on the end zone's largest
 * T_t itself (its maximum over at most G points hardly depends on n). From tests/reference/calibrate_shifts.ts
 * (fixtures/reference/shift_calibration.json): over 27 cells of null records — stationary AR(1) with φ = 0, 0.5,
 * 0.8, 0.9, 0.95; two slowing-down nulls (φ 0.2→0.95; φ 0.5→0.95 with sd 1→2); two approaches to a fold (Cessi's
 * 1994 box model and May's 1977 grazing model, forcing ramped to just short of the fold), at n = 200 (6,000
 * records each), 1,000 (3,000) and 5,000 (1,000); minSegment 5 — `interior` is the largest upper
 * (1 − END_SHARE)·α quantile and `end` the largest upper END_SHARE·α quantile over the cells, rounded up to 0.05.
 * With them the largest share of calibration records with any shift in one cell was 0.57 % at α = 0.01 (34 of
 * 6,000: n = 200, φ 0.5→0.95 with sd 1→2), 2.6 % at 0.05 and 5.6 % at 0.1; outside the calibrated lengths, spot
 * checks (stationary φ = 0 and 0.9 and φ 0.2→0.95 at n = 20,000, 300 records, and n = 100,000, 100 records) gave
 * 0–1 % of records with a shift at α = 0.01, 1.7–4 % at 0.05 and 3.3–11 % at 0.1, within the binomial spread of
 * so few records.
 */
export const SHIFT_THRESHOLD_CONSTANTS: readonly { rate: number; interior: number; end: number }[] = [
  { rate: 0.01, interior: 4.95, end: 5.7 },
  { rate: 0.05, interior: 3.75, end: 4.85 },
  { rate: 0.1, interior: 3.2, end: 4.4 },
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
 * Threshold constants for a false-positive rate: the calibrated constants at their rates, log-linear in the rate
 * between them; rates outside the calibrated range are refused (RangeError). O(1).
 */
function shiftThresholdConstants(rate: number): { interior: number; end: number } {
  const table = SHIFT_THRESHOLD_CONSTANTS;
  for (let i = 0; i < table.length; i++) {
    if (rate === table[i].rate) return { interior: table[i].interior, end: table[i].end };
    if (i + 1 < table.length && rate > table[i].rate && rate < table[i + 1].rate) {
      const f = Math.log(rate / table[i].rate) / Math.log(table[i + 1].rate / table[i].rate);
      const lo = table[i];
      const hi = table[i + 1];
      return { interior: lo.interior + f * (hi.interior - lo.interior), end: lo.end + f * (hi.end - lo.end) };
    }
  }
  throw new RangeError(`falsePositiveRate ${rate} is outside the calibrated range [${table[0].rate}, ${table[table.length - 1].rate}]`);
}

/** Threshold on the interior T_t of an n-point record scanned at bandwidth G: (b(n/G) + c) / a(n/G) (see scanNormalisation). O(1). */
function shiftThreshold(n: number, bandwidth: number, constant: number): number {
  const { a, b } = scanNormalisation(n / bandwidth);
  return (b + constant) / a;
}

/**
 * The scan of a record: its bandwidth, where its end zone starts, and at each grid point the standardised jump T_t
 * and the jump D_t (NaN where not judged).
 */
export interface ShiftScan {
  bandwidth: number;
  /** first grid point whose new-level window is cut short by the record's end (n − G + 1) */
  endZone: number;
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
 * observed points of the G grid points before t (the old level) and to those of the G points from t on (the new
 * level), both are read at t − ½, and
 *   D_t = line_new(t − ½) − line_old(t − ½),   T_t = |D_t| / √(σ̂²_old v_old + σ̂²_new v_new),
 * where v is each line's variance factor at t − ½ and σ̂² each side's AR(1) long-run variance (windowLine), the
 * larger of that fitted on its G points and that fitted over SCALE_FACTOR·G points on its side. Because each side
 * has its own line, a level that drifts smoothly (a linear trend exactly, a curving one up to its curvature times
 * G²) gives D_t ≈ 0, while a step of size δ gives D_t ≈ δ; because each side has its own noise scale, rising
 * variance and memory (as before a fold) are judged against themselves.
 * At the ends of the record the windows are cut short. The old level's window may shrink to ⌈G/2⌉ points at the
 * record's start (a record never grows there). The new level's window may shrink to max(minSegment, 4, ⌈G/8⌉)
 * points in the end zone t > n − G, so that a large shift is seen soon after it happens rather than G points
 * later; a window that short cannot tell its own memory, so there the new level's noise scale is at least the old
 * level's, and the end zone has its own threshold (detectShifts). Points where either side has fewer than
 * max(minSegment, 4) observed points, or no noise, are not judged (NaN). A moving-window (MOSUM) scan in the sense
 * of Eichinger & Kirch (2018), with local-linear rather than local-mean windows so that smooth drift is not
 * mistaken for a shift. Cost O(n) time and memory (prefix sums). Sources: Eichinger & Kirch (2018), "A MOSUM
 * procedure for the estimation of multiple random change points", Bernoulli 24, 526–564 (from memory); Fan &
 * Gijbels (1996), Local Polynomial Modelling and Its Applications, Sec. 3.2 (one-sided local-linear fits at a
 * boundary, from memory); von Neumann (1941), Ann. Math. Stat. 12, 367–395 (mean square successive difference,
 * from memory); Andrews (1991), Econometrica 59, 817–858 (AR(1) plug-in long-run variance, from memory).
 */
export function shiftScan(x: Float64Array, minSegment = DEFAULT_MIN_SEGMENT): ShiftScan {
  if (!(Number.isInteger(minSegment) && minSegment >= 1)) throw new RangeError(`minSegment must be a positive integer (got ${minSegment})`);
  const n = x.length;
  const G = shiftBandwidth(n, minSegment);
  const statistic = new Float64Array(n).fill(Number.NaN);
  const jump = new Float64Array(n).fill(Number.NaN);
  if (n < 2 * G) return { bandwidth: G, endZone: n, statistic, jump };
  const s = prefixSums(x);
  const least = Math.max(minSegment, 4);
  const S = SCALE_FACTOR * G;
  // A shorter old-level window only at the record's start; a shorter new-level window in the end zone (see the doc comment).
  const shortest = Math.max(least, Math.ceil(G / 8));
  for (let t = Math.ceil(G / 2); t + shortest <= n; t++) {
    const u = t - 0.5;
    const left = windowLine(s, Math.max(0, t - G), t, u, least);
    const right = windowLine(s, t, Math.min(n, t + G), u, least);
    if (left === null || right === null) continue;
    const leftScale = windowLine(s, Math.max(0, t - S), t, u, least)!;
    const rightScale = windowLine(s, t, Math.min(n, t + S), u, least)!;
    const leftVariance = Math.max(left.lrv, leftScale.lrv);
    // A new level shorter than G cannot tell its own memory: it takes at least the old level's noise scale.
    const rightVariance = t + G > n ? Math.max(right.lrv, rightScale.lrv, leftVariance) : Math.max(right.lrv, rightScale.lrv);
    const variance = leftVariance * left.v + rightVariance * right.v;
    if (!(variance > 0)) continue;
    jump[t] = right.value - left.value;
    statistic[t] = Math.abs(jump[t]) / Math.sqrt(variance);
  }
  return { bandwidth: G, endZone: n - G + 1, statistic, jump };
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
 * and memory may change slowly. The local-linear jump scan T_t (shiftScan, bandwidth G = round(4√n)) is compared
 * with a threshold: (b(n/G) + c_interior(α))/a(n/G) before the end zone (shiftThreshold) and c_end(α) in it, the
 * rate α split between them by Bonferroni (END_SHARE). Each t where T_t exceeds its threshold by the largest
 * ratio within G grid points either side is a shift (the local-maximum rule of Eichinger & Kirch 2018, from
 * memory), and size = D_t there. The constants were calibrated by simulation so that at most a share α of null
 * records — stationary AR(1) with φ up to 0.95, records whose φ and variance rise as before a fold, and simulated
 * approaches to a fold of Cessi's (1994) and May's (1977) models, n from 200 to 5,000 — report any shift
 * (SHIFT_THRESHOLD_CONSTANTS). A shift is seen once max(minSegment, 4, ⌈G/8⌉) points of its new level have been
 * recorded if it is large, and once G have if it is moderate. Not within ⌈G/2⌉ points of the record's start.
 *
 * Cost O(n) time and memory. Sources: Eichinger & Kirch (2018), Bernoulli 24, 526–564 (moving-window scan,
 * threshold form and local-maximum rule, from memory); Bonferroni's inequality (common practice); the sources of
 * shiftScan.
 */
export function detectShifts(x: Float64Array, options: ShiftOptions = {}): LevelShift[] {
  const constants = shiftThresholdConstants(options.falsePositiveRate ?? 0.01);
  const { bandwidth: G, endZone, statistic, jump } = shiftScan(x, options.minSegment ?? DEFAULT_MIN_SEGMENT);
  const n = x.length;
  if (n < 2 * G) return [];
  const interior = shiftThreshold(n, G, constants.interior);
  // Each point's statistic as a multiple of its zone's threshold, so that peaks compare across the zones.
  const ratio = statistic.map((T, t) => T / (t < endZone ? interior : constants.end));
  const peaks = windowMaxima(ratio, G);
  const shifts: LevelShift[] = [];
  let last = -Infinity;
  for (let t = 0; t < n; t++) {
    const r = ratio[t];
    // A shift where the ratio exceeds 1 and is the largest within G either side (the first of equal maxima).
    if (!(r > 1 && r === peaks[t] && t - last > G)) continue;
    last = t;
    let index = t;
    while (Number.isNaN(x[index])) index++;
    shifts.push({ index, size: jump[t] });
  }
  return shifts;
}
