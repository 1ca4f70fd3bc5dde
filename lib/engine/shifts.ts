import { quickselect } from 'simple-statistics';

/** One abrupt shift of level. */
export interface LevelShift {
  /** Grid index of the first observed point of the new level (0-based). */
  index: number;
  /** Mean of the new level's segment minus mean of the old level's segment (observed points only). */
  size: number;
}

export interface ShiftOptions {
  /** Fewest observed points in any level (segment); default DEFAULT_MIN_SEGMENT. */
  minSegment?: number;
  /** Chance per record of reporting a shift where there is none; a calibrated rate, default 0.01. */
  falsePositiveRate?: number;
}

/** Default fewest observed points per level; the penalty constants were calibrated with it. */
export const DEFAULT_MIN_SEGMENT = 5;

/**
 * Penalty constants c(α) of β = c · σ̂²_LR · ln(n_obs)/(1 − φ̂) (see detectShifts), calibrated once by
 * tests/reference/calibrate_shifts.ts: for each null record the smallest c reporting no shift was found by
 * bisection, and c(α) is the largest (1 − α) quantile of those over 21 cells (stationary AR(1), φ = 0, 0.5,
 * 0.8, 0.9, 0.95, and two slowing-down nulls, φ 0.2→0.95 and φ 0.5→0.95 with sd 1→2; n = 200 (500 records
 * each), 1,000 (200), 5,000 (70); minSegment 5; fixtures/reference/shift_calibration.json). The binding cells
 * are the short slowing-down records (n = 200 and 1,000); stationary records at n ≥ 1,000 gave no false
 * positive at any of these constants.
 */
export const SHIFT_PENALTY_CONSTANTS: readonly { rate: number; constant: number }[] = [
  { rate: 0.01, constant: 11.25 },
  { rate: 0.05, constant: 5.79 },
  { rate: 0.1, constant: 4.54 },
];

/** Largest lag-1 coefficient the noise model takes; beyond it σ²_LR ∝ 1/(1 − φ)² is too unstable to use. */
const PHI_MAX = 0.99;

/** Most candidate change positions the dynamic programme searches at once (see detectShifts). */
const MAX_SEARCH_POSITIONS = 2048;

/** Φ⁻¹(3/4): median |Z| for standard normal Z, which makes the median absolute value a consistent sd. */
const NORMAL_MAD = 0.6744897501960817;

/** Penalty constant of the pilot search, which only proposes levels for the noise estimate (see detectShifts). */
const PILOT_CONSTANT = 3;

/**
 * Penalty constant of the strict pilot, whose levels give the φ̂ in the penalty's 1/(1 − φ̂): it splits a
 * null record so rarely that φ̂ keeps the record's full memory, yet finds shifts clear enough to inflate φ̂.
 */
const STRICT_PILOT_CONSTANT = 30;

/**
 * Largest φ the pilot's robust scale takes: its φ̂ is noisy near 1, and at 0.99 the scale could be a hundred
 * times too large and hide a clear shift from the pilot.
 */
const PILOT_PHI_MAX = 0.95;

/**
 * Normal-consistent scale of values centred on zero: median|d| / Φ⁻¹(3/4); when more than half are exactly
 * zero (coarsely quantised readings) the root mean square instead, so the scale is zero only for exactly
 * constant input. Reorders `d`. O(n) expected (Floyd–Rivest selection, simple-statistics' quickselect).
 * Source: Hampel (1974), JASA 69, 383–393 (median absolute deviation, from memory).
 */
function zeroCentredScale(d: Float64Array): number {
  const n = d.length;
  if (n === 0) return 0;
  for (let i = 0; i < n; i++) d[i] = Math.abs(d[i]);
  const k = (n - 1) >> 1;
  // quickselect only reads and swaps elements, which a typed array supports.
  quickselect(d as unknown as number[], k);
  let med = d[k];
  if (n % 2 === 0) {
    let next = Infinity;
    for (let i = k + 1; i < n; i++) if (d[i] < next) next = d[i];
    med = (med + next) / 2;
  }
  if (med > 0) return med / NORMAL_MAD;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += d[i] * d[i];
  return Math.sqrt(ss / n);
}

/** Differences x[i+lag] − x[i] over pairs whose both ends are observed (not NaN). O(n). */
function observedDifferences(x: Float64Array, lag: number): Float64Array {
  const out = new Float64Array(Math.max(0, x.length - lag));
  let k = 0;
  for (let i = 0; i + lag < x.length; i++) {
    const d = x[i + lag] - x[i];
    if (!Number.isNaN(d)) out[k++] = d;
  }
  return out.subarray(0, k);
}

/**
 * Long-run variance of AR(1) noise that level shifts hardly disturb, from differences at lags 1 and 2 (a
 * shift touches only one or two of them): with s_k the normal-consistent median scale of x_{t+k} − x_t,
 * Var(x_{t+k} − x_t) = 2σ²_y(1 − φ^k), so φ̂ = s₂²/s₁² − 1 (clamped to [0, 0.95]), σ̂²_y = s₁²/(2(1 − φ̂)),
 * σ̂²_LR = σ̂²_y (1 + φ̂)/(1 − φ̂). Robust but noisy when φ is near 1, so used only for the pilot search.
 * Missing points are skipped pairwise. O(n) expected. Source: Chakar, Lebarbier, Lévy-Leduc & Robin
 * (2017), "A robust approach for estimating change-points in the mean of an AR(1) process", Bernoulli 23,
 * 1408–1447 (the lag-1/lag-2 median estimator of φ, from memory).
 */
export function robustLongRunVariance(x: Float64Array): number {
  const s1 = zeroCentredScale(observedDifferences(x, 1));
  const s2 = zeroCentredScale(observedDifferences(x, 2));
  if (!(s1 > 0)) return (s2 * s2) / 2;
  const phi = Math.min(PILOT_PHI_MAX, Math.max(0, (s2 * s2) / (s1 * s1) - 1));
  return ((s1 * s1) / (2 * (1 - phi)) * (1 + phi)) / (1 - phi);
}

/** Noise model of a record: AR(1) around piecewise-constant levels. */
export interface ShiftNoise {
  /** Lag-1 coefficient φ̂ of the residuals, in [0, PHI_MAX]. */
  phi: number;
  /** Long-run variance σ̂²_LR = lim n·Var(mean of n points) = σ̂²_y (1 + φ̂)/(1 − φ̂). */
  longRunVariance: number;
}

/**
 * AR(1) noise of the residuals about given levels: r_t = x_t − x̄_j on the segments [bounds_j, bounds_{j+1}),
 * σ̂²_y = Σ r²/n_obs, φ̂ = Σ r_t r_{t+1} / Σ r² over neighbouring pairs both observed and in the same segment
 * (Yule–Walker; clamped to [0, 0.99], a negative φ taken as 0 overstates σ²_LR and so errs towards fewer
 * shifts), σ̂²_LR = σ̂²_y (1 + φ̂)/(1 − φ̂), the spectral density at frequency zero of the fitted AR(1)
 * (times 2π). Missing points (NaN) are skipped. O(n). Sources: Box, Jenkins, Reinsel & Ljung (2015), Time
 * Series Analysis, 5th ed., Sec. 3.2 (AR(1), Yule–Walker); Andrews (1991), Econometrica 59, 817–858
 * (AR(1) plug-in for the long-run variance, from memory); Bai & Perron (2003), J. Appl. Econometrics 18,
 * 1–22 (long-run variance from the residuals of the fitted levels, from memory).
 */
export function shiftNoise(x: Float64Array, bounds: number[] = [0, x.length]): ShiftNoise {
  let ss = 0;
  let lag = 0;
  let k = 0;
  for (let j = 0; j + 1 < bounds.length; j++) {
    const a = bounds[j];
    const b = bounds[j + 1];
    // Sums about the segment's first observed value, so large offsets cost no digits.
    let shift = Number.NaN;
    let sum = 0;
    let m = 0;
    for (let t = a; t < b; t++) {
      if (Number.isNaN(x[t])) continue;
      if (m === 0) shift = x[t];
      sum += x[t] - shift;
      m++;
    }
    if (m === 0) continue;
    const mean = shift + sum / m;
    let prev = Number.NaN;
    for (let t = a; t < b; t++) {
      const r = x[t] - mean;
      if (!Number.isNaN(r)) {
        ss += r * r;
        k++;
        if (!Number.isNaN(prev)) lag += prev * r;
      }
      prev = r;
    }
  }
  if (!(ss > 0)) return { phi: 0, longRunVariance: 0 };
  const phi = Math.min(PHI_MAX, Math.max(0, lag / ss));
  return { phi, longRunVariance: ((ss / k) * (1 + phi)) / (1 - phi) };
}

/**
 * Penalty constant for a false-positive rate: the calibrated constants at their rates, log-linear in the
 * rate between them; rates outside the calibrated range are refused (RangeError). O(1).
 */
export function shiftPenaltyConstant(rate: number): number {
  const table = SHIFT_PENALTY_CONSTANTS;
  for (let i = 0; i < table.length; i++) {
    if (rate === table[i].rate) return table[i].constant;
    if (i + 1 < table.length && rate > table[i].rate && rate < table[i + 1].rate) {
      const f = Math.log(rate / table[i].rate) / Math.log(table[i + 1].rate / table[i].rate);
      return table[i].constant + f * (table[i + 1].constant - table[i].constant);
    }
  }
  throw new RangeError(`falsePositiveRate ${rate} is outside the calibrated range [${table[0].rate}, ${table[table.length - 1].rate}]`);
}

/**
 * Abrupt shifts of level in a series on a regular grid. NaN marks a missing point and is skipped in every
 * sum (so either the raw grid with NaN or the gap-filled grid may be passed; filled points count as
 * observed); a shift is reported at the first observed point of its new level.
 *
 * Model: x_t = μ_j + e_t on segments j, e a stationary AR(1)-like noise. The segments minimise
 * Σ_j Σ_{t∈j} (x_t − x̄_j)² + β·(number of shifts), each with ≥ minSegment observed points, with
 * β = c(α) · σ̂²_LR · ln(n_obs) / (1 − φ̂): least squares stays consistent for the shift positions under
 * dependent noise, and the gain of a spurious split in dependent noise scales with the long-run variance
 * σ²_LR, not with σ², so the penalty is scaled by σ̂²_LR; the extra 1/(1 − φ̂) widens it where σ̂²_LR itself
 * is least certain (few effective observations when φ is near 1; without it the calibrated c for short
 * records at φ = 0.95 was ten times that at φ = 0). The noise is estimated in steps, each protecting the
 * next from what shifts and slowing down do to it: a pilot search (penalty 3 · robustLongRunVariance ·
 * ln n) proposes levels with a scale that shifts hardly inflate; σ̂²_LR is the AR(1) long-run variance of
 * the residuals about those levels (shiftNoise); φ̂ is the lag-1 coefficient about the levels of a strict
 * pilot (constant 30), which keeps the full memory of a record without clear shifts. Both come from sums of
 * squares and so follow the noisiest part of the record, which is what keeps rising variance and memory
 * before a fold from looking like shifts. c(α) was calibrated by simulation so that at most a share α of
 * null records (stationary AR(1) with φ up to 0.95 and records whose φ and variance rise as before a fold,
 * n from 200 to 5,000) report any shift (SHIFT_PENALTY_CONSTANTS, calibrated with minSegment = 5; a longer
 * minimum segment can only report fewer shifts). Each search is PELT; above 2,048 grid points it runs over block
 * boundaries (blocks of ⌈n/2048⌉ points) and then moves each shift to the best single point within a block
 * either side, given its neighbours. size = x̄_new − x̄_old over the adjacent segments.
 *
 * Cost: O(n) for the sums and the noise scales, plus O(K²) per search over K = min(n, 2,048) positions in
 * the worst case (no shift, when PELT cannot prune), O(K) expected when shifts occur throughout.
 * Sources: Killick, Fearnhead & Eckley (2012), "Optimal detection of changepoints with a linear computational
 * cost", JASA 107, 1590–1598 (PELT, pruning with K = 0 for this cost); Lavielle & Moulines (2000), "Least-
 * squares estimation of an unknown number of shifts in a time series", J. Time Ser. Anal. 21, 33–59
 * (least squares under dependent noise, from memory); Chakar et al. (2017), Bernoulli 23, 1408–1447
 * (robust AR(1) scale, from memory); Bai & Perron (2003), J. Appl. Econometrics 18, 1–22 (long-run
 * variance from the residuals about the estimated levels, from memory).
 */
export function detectShifts(x: Float64Array, options: ShiftOptions = {}): LevelShift[] {
  return shiftsWithPenalty(x, shiftPenaltyConstant(options.falsePositiveRate ?? 0.01), options.minSegment ?? DEFAULT_MIN_SEGMENT);
}

/**
 * detectShifts with the penalty constant c given directly (β = c · σ̂²_LR · ln(n_obs)); the calibration
 * script searches c with it. Same cost and sources as detectShifts.
 */
export function shiftsWithPenalty(x: Float64Array, constant: number, minSegment: number): LevelShift[] {
  if (!(Number.isInteger(minSegment) && minSegment >= 1)) throw new RangeError(`minSegment must be a positive integer (got ${minSegment})`);
  const n = x.length;

  // Prefix count and sums of the observed values about the first observed one (so large offsets cost no digits).
  let centre = Number.NaN;
  for (let i = 0; i < n && Number.isNaN(centre); i++) centre = x[i];
  const cnt = new Float64Array(n + 1);
  const s1 = new Float64Array(n + 1);
  const s2 = new Float64Array(n + 1);
  for (let i = 0; i < n; i++) {
    const y = x[i] - centre;
    const seen = !Number.isNaN(y);
    cnt[i + 1] = cnt[i] + (seen ? 1 : 0);
    s1[i + 1] = s1[i] + (seen ? y : 0);
    s2[i + 1] = s2[i] + (seen ? y * y : 0);
  }
  const observed = cnt[n];
  if (observed < 2 * minSegment) return [];
  const logN = Math.log(observed);

  /** Σ (x − x̄)² over grid points [a, b). */
  const cost = (a: number, b: number): number => {
    const k = cnt[b] - cnt[a];
    if (k === 0) return 0;
    const t = s1[b] - s1[a];
    return s2[b] - s2[a] - (t * t) / k;
  };

  const block = Math.ceil(n / MAX_SEARCH_POSITIONS);
  const positions: number[] = [];
  for (let p = 0; p < n; p += block) positions.push(p);
  positions.push(n);
  // The pilots' robust scale is not inflated by a shift but is noisy near φ = 1, so it only proposes levels;
  // the penalty's scale and φ̂ are fitted about them (see the doc comment).
  const robust = robustLongRunVariance(x) * logN;
  const pilot = pelt(positions, cnt, s1, s2, PILOT_CONSTANT * robust, minSegment);
  const strict = pelt(positions, cnt, s1, s2, STRICT_PILOT_CONSTANT * robust, minSegment);
  const { longRunVariance } = shiftNoise(x, [0, ...pilot, n]);
  if (!(longRunVariance > 0)) return [];
  const { phi } = shiftNoise(x, [0, ...strict, n]);
  let cuts = pelt(positions, cnt, s1, s2, (constant * longRunVariance * logN) / (1 - phi), minSegment);
  if (block > 1) cuts = refine(cuts, block, n, cnt, cost, minSegment);

  const bounds = [0, ...cuts, n];
  const mean = (a: number, b: number) => (s1[b] - s1[a]) / (cnt[b] - cnt[a]);
  const shifts: LevelShift[] = [];
  for (let j = 1; j < bounds.length - 1; j++) {
    let index = bounds[j];
    while (Number.isNaN(x[index])) index++;
    shifts.push({ index, size: mean(bounds[j], bounds[j + 1]) - mean(bounds[j - 1], bounds[j]) });
  }
  return shifts;
}

/**
 * PELT over the allowed cut positions pos[0] = 0 < … < pos[K] = n: F(T) = min_i F(i) + C(pos_i, pos_T) + β,
 * F(0) = −β, over i whose segment holds ≥ m observed points. Candidate i is dropped once
 * F(i) + C(pos_i, pos_T) > F(T), but only from the first T' whose segment from T is long enough for T to
 * take its place, which keeps the pruning exact under the minimum segment length. Returns the interior cuts.
 * Cost O(K) expected, O(K²) worst case. Source: Killick, Fearnhead & Eckley (2012), JASA 107, 1590–1598.
 */
function pelt(pos: number[], cnt: Float64Array, s1: Float64Array, s2: Float64Array, beta: number, m: number): number[] {
  const K = pos.length - 1;
  const F = new Float64Array(K + 1).fill(Infinity);
  const last = new Int32Array(K + 1).fill(-1);
  F[0] = -beta;
  // Active candidates, compacted in place: position index, the T from which it may be dropped, and F(i) + C(i, T).
  const active = new Int32Array(K + 1);
  const expires = new Float64Array(K + 1);
  const value = new Float64Array(K + 1);
  let size = 0;
  let pending = 0;
  for (let T = 1; T <= K; T++) {
    const pT = pos[T];
    const c = cnt[pT];
    while (pending < T && c - cnt[pos[pending]] >= m) {
      if (F[pending] < Infinity) {
        active[size] = pending;
        expires[size++] = Infinity;
      }
      pending++;
    }
    let best = Infinity;
    let arg = -1;
    for (let k = 0; k < size; k++) {
      const pi = pos[active[k]];
      const sum = s1[pT] - s1[pi];
      const v = F[active[k]] + s2[pT] - s2[pi] - (sum * sum) / (c - cnt[pi]);
      value[k] = v;
      if (v < best) {
        best = v;
        arg = active[k];
      }
    }
    if (arg < 0) continue;
    F[T] = best + beta;
    last[T] = arg;
    // The first position whose segment from T is long enough: from there on T can replace a pruned i.
    let from = T + 1;
    while (from <= K && cnt[pos[from]] - c < m) from++;
    let kept = 0;
    for (let k = 0; k < size; k++) {
      let e = expires[k];
      if (e <= T) continue;
      if (value[k] > F[T] && from < e) e = from;
      active[kept] = active[k];
      expires[kept++] = e;
    }
    size = kept;
  }
  const cuts: number[] = [];
  for (let T = last[K]; T > 0; T = last[T]) cuts.push(pos[T]);
  return cuts.reverse();
}

/**
 * Moves each cut c_j to the grid point t within (c_j − block, c_j + block) that minimises
 * C(c_{j−1}, t) + C(t, c_{j+1}) with the neighbours fixed (left to right, using the refined left
 * neighbour), keeping ≥ m observed points on either side. O(block) per cut. Common practice (coarse-to-fine
 * search).
 */
function refine(cuts: number[], block: number, n: number, cnt: Float64Array, cost: (a: number, b: number) => number, m: number): number[] {
  const out = [...cuts];
  for (let j = 0; j < out.length; j++) {
    const a = j > 0 ? out[j - 1] : 0;
    const b = j + 1 < out.length ? out[j + 1] : n;
    let best = Infinity;
    let arg = out[j];
    for (let t = Math.max(a + 1, out[j] - block + 1); t < Math.min(b, out[j] + block); t++) {
      if (cnt[t] - cnt[a] < m || cnt[b] - cnt[t] < m) continue;
      const v = cost(a, t) + cost(t, b);
      if (v < best) {
        best = v;
        arg = t;
      }
    }
    out[j] = arg;
  }
  return out;
}
