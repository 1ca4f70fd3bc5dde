import { indicatorDefinition } from './indicators';
import { twoSidedNormalP } from './normal';

/** Pair counts behind Kendall's tau and the Mann–Kendall test. */
export interface KendallCounts {
  n: number;
  /** S = concordant − discordant pairs */
  s: number;
  concordant: number;
  discordant: number;
  /** Σ t(t−1)/2, Σ t(t−1)(t−2), Σ t(t−1)(2t+5) over groups of ties in x and in y */
  xTies: { pairs: number; v0: number; v1: number };
  yTies: { pairs: number; v0: number; v1: number };
}

function tieStats(sorted: Float64Array): { pairs: number; v0: number; v1: number } {
  let pairs = 0,
    v0 = 0,
    v1 = 0;
  for (let i = 0; i < sorted.length;) {
    let j = i + 1;
    while (j < sorted.length && sorted[j] === sorted[i]) j++;
    const t = j - i;
    if (t > 1) {
      pairs += (t * (t - 1)) / 2;
      v0 += t * (t - 1) * (t - 2);
      v1 += t * (t - 1) * (2 * t + 5);
    }
    i = j;
  }
  return { pairs, v0, v1 };
}

/**
 * Sorts a in place (ascending) and returns the number of inversions (pairs i < j with a_i > a_j):
 * insertion sort on runs of 16, then bottom-up merging, counting mid − i each time the right run wins.
 * Cost O(m log m). Source: Knight (1966), "A computer method for calculating Kendall's tau with
 * ungrouped data", J. Am. Stat. Assoc. 61, 436–439.
 */
function sortCountingInversions(a: Float64Array): number {
  const m = a.length;
  let swaps = 0;
  const RUN = 16;
  for (let lo = 0; lo < m; lo += RUN) {
    const hi = Math.min(m, lo + RUN);
    for (let i = lo + 1; i < hi; i++) {
      const v = a[i];
      let j = i - 1;
      while (j >= lo && a[j] > v) {
        a[j + 1] = a[j];
        j--;
      }
      swaps += i - 1 - j;
      a[j + 1] = v;
    }
  }
  let src: Float64Array = a;
  let dst: Float64Array = new Float64Array(m);
  for (let width = RUN; width < m; width *= 2) {
    for (let lo = 0; lo < m; lo += 2 * width) {
      const mid = Math.min(m, lo + width);
      const hi = Math.min(m, lo + 2 * width);
      let i = lo,
        j = mid,
        k = lo;
      while (i < mid && j < hi) {
        if (src[j] < src[i]) {
          swaps += mid - i;
          dst[k++] = src[j++];
        } else dst[k++] = src[i++];
      }
      while (i < mid) dst[k++] = src[i++];
      while (j < hi) dst[k++] = src[j++];
    }
    const t = src;
    src = dst;
    dst = t;
  }
  if (src !== a) a.set(src);
  return swaps;
}

/**
 * Concordant/discordant pair counts and tie statistics of (x_i, y_i) in O(m log m): sort by (x, y),
 * count ties in x and joint ties, count discordant pairs as inversions of y by merge sort, count ties
 * in y. With x = null, x is the index 0..m−1 (strictly increasing, no sort needed).
 * C + D = n0 − n1 − n2 + n3 with n0 = m(m−1)/2. Source: Knight (1966), JASA 61, 436–439.
 */
export function kendallCounts(x: Float64Array | null, y: Float64Array): KendallCounts {
  const m = y.length;
  let ys: Float64Array;
  let xTies = { pairs: 0, v0: 0, v1: 0 };
  let joint = 0;
  if (x === null) {
    ys = Float64Array.from(y);
  } else {
    const order = Array.from({ length: m }, (_, i) => i);
    order.sort((p, q) => x[p] - x[q] || y[p] - y[q]);
    const xs = new Float64Array(m);
    ys = new Float64Array(m);
    for (let i = 0; i < m; i++) {
      xs[i] = x[order[i]];
      ys[i] = y[order[i]];
    }
    xTies = tieStats(xs);
    for (let i = 0; i < m;) {
      let j = i + 1;
      while (j < m && xs[j] === xs[i] && ys[j] === ys[i]) j++;
      joint += ((j - i) * (j - i - 1)) / 2;
      i = j;
    }
  }
  const discordant = sortCountingInversions(ys);
  const yTies = tieStats(ys);
  const n0 = (m * (m - 1)) / 2;
  const concordant = n0 - xTies.pairs - yTies.pairs + joint - discordant;
  return { n: m, s: concordant - discordant, concordant, discordant, xTies, yTies };
}

export interface KendallResult {
  tau: number;
  p: number;
  s: number;
  varS: number;
  n: number;
}

/**
 * Kendall's tau-b, τ = S/√((n0 − n1)(n0 − n2)), with the two-sided p-value of z = S/√Var(S) (normal
 * approximation, no continuity correction) and the tie-corrected variance
 * Var(S) = [v0 − vt − vu]/18 + 2 n1 n2/(n(n−1)) + t2 u2/(9 n(n−1)(n−2)), v0 = n(n−1)(2n+5),
 * exactly as scipy.stats.kendalltau(method='asymptotic'). NaN when undefined (fewer than 3 points,
 * or all values tied). Cost O(m log m). Sources: Kendall (1945), Biometrika 33, 239–251; Kendall &
 * Gibbons (1990), Rank Correlation Methods, 5th ed., Ch. 3–4; SAS PROC CORR documentation (tau-b).
 */
export function kendallTau(x: Float64Array | null, y: Float64Array): KendallResult {
  const c = kendallCounts(x, y);
  const n = c.n;
  if (n < 3) return { tau: Number.NaN, p: Number.NaN, s: c.s, varS: Number.NaN, n };
  const n0 = (n * (n - 1)) / 2;
  const denom = Math.sqrt((n0 - c.xTies.pairs) * (n0 - c.yTies.pairs));
  const tau = denom > 0 ? Math.max(-1, Math.min(1, c.s / denom)) : Number.NaN;
  const mm = n * (n - 1);
  const varS = (mm * (2 * n + 5) - c.xTies.v1 - c.yTies.v1) / 18 + (2 * c.xTies.pairs * c.yTies.pairs) / mm + (c.xTies.v0 * c.yTies.v0) / (9 * mm * (n - 2));
  const p = denom > 0 && varS > 0 ? twoSidedNormalP(c.s / Math.sqrt(varS)) : Number.NaN;
  return { tau, p, s: c.s, varS, n };
}

/**
 * Trend of one indicator: Kendall tau-b between index and value over the finite entries (their
 * positions as x, which are strictly increasing, so the index path applies). O(m log m).
 */
export function indicatorTrend(values: ArrayLike<number>): KendallResult {
  let m = 0;
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) m++;
  // Only the order of the positions matters, so the index form holds even with interior gaps.
  const y = new Float64Array(m);
  let k = 0;
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) y[k++] = values[i];
  return kendallTau(null, y);
}

export interface MannKendallResult {
  n: number;
  s: number;
  varS: number;
  z: number;
  p: number;
}

/**
 * Mann–Kendall trend test on a series in time order: S = Σ_{i<j} sgn(x_j − x_i),
 * Var(S) = [n(n−1)(2n+5) − Σ t(t−1)(2t+5)]/18 (ties in the values), z = (S − sgn S)/√Var(S)
 * (continuity correction), two-sided p = 2(1 − Φ(|z|)). Cost O(n log n). Sources: Mann (1945),
 * Econometrica 13, 245–259; Kendall (1975), Rank Correlation Methods; Gilbert (1987), Statistical
 * Methods for Environmental Pollution Monitoring, Ch. 16.
 */
export function mannKendall(values: Float64Array): MannKendallResult {
  const c = kendallCounts(null, values);
  const n = c.n;
  const varS = (n * (n - 1) * (2 * n + 5) - c.yTies.v1) / 18;
  const z = c.s === 0 || !(varS > 0) ? 0 : (c.s - Math.sign(c.s)) / Math.sqrt(varS);
  return { n, s: c.s, varS, z, p: varS > 0 ? twoSidedNormalP(z) : Number.NaN };
}

/**
 * Kendall trend (tau, p) of each indicator series. An indicator its definition declares a strictly monotone
 * transform of another (`trendOf`: sd = √variance; recovery = −ln(ac1)/Δt) has that one's tau times the sign,
 * when both are present and defined at the same points (recovery is undefined where ac1 ≤ 0); those are reused, not
 * recomputed. Cost O(m log m) per distinct indicator. Source: invariance of rank statistics under monotone
 * transforms, Kendall & Gibbons (1990), Ch. 1 (from memory).
 */
export function indicatorTrends<K extends string>(values: Partial<Record<K, Float64Array>>): Partial<Record<K, KendallResult>> {
  const out: Partial<Record<string, KendallResult>> = {};
  const v = values as Partial<Record<string, Float64Array>>;
  const reused = reusedTrends(v);
  for (const name of Object.keys(v)) if (!reused.has(name)) out[name] = indicatorTrend(v[name]!);
  for (const [name, { base, sign }] of reused) {
    const t = out[base]!;
    out[name] = sign === 1 ? t : { ...t, tau: -t.tau, s: -t.s };
  }
  return out as Partial<Record<K, KendallResult>>;
}

/**
 * The indicators whose trend indicatorTrends takes from another (its `trendOf` base, present and defined at the same
 * points), with the sign; shared with the incremental update so both publish the same τ. O(n) per such indicator.
 */
export function reusedTrends(values: Partial<Record<string, Float64Array>>): Map<string, { base: string; sign: 1 | -1 }> {
  const sameDefined = (a: Float64Array, b: Float64Array) => {
    for (let i = 0; i < a.length; i++) if (Number.isFinite(a[i]) !== Number.isFinite(b[i])) return false;
    return true;
  };
  const reused = new Map<string, { base: string; sign: 1 | -1 }>();
  for (const name of Object.keys(values)) {
    const of = indicatorDefinition(name)?.trendOf;
    const base = of ? values[of.name] : undefined;
    if (of && base && sameDefined(base, values[name]!)) reused.set(name, { base: of.name, sign: of.sign });
  }
  return reused;
}
