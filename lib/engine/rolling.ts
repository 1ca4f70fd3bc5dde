import { AnalysisInputError } from './errors';
import { extentPoints, type Extent } from './extent';
import type { TimeKind } from './time-kind';
import { indicatorDefinition, needsRawMean, type IndicatorName } from './indicators';
import type { MomentIndicator, WindowMomentValues } from './indicators/definition';

/** Smallest rolling window, in points, for which the moment estimators mean anything. */
export const MIN_WINDOW_POINTS = 8;

/**
 * Window length in points: w = round(extent in points) (extentPoints: a fraction of the n points of the stretch,
 * "<k> points", or an ISO 8601 duration over the sampling interval, which then must be given in UTC ms). Throws
 * AnalysisInputError when w < 8 or w > n. O(1). Source: the engine contract (README, "Indicator definitions").
 */
export function windowPoints(window: Extent, n: number, interval?: number, kind: TimeKind = 'numeric'): number {
  const w = Math.round(extentPoints(window, n, interval ?? Number.NaN, interval === undefined ? 'numeric' : kind));
  const given = typeof window === 'number' ? `${window} × ${n} points = ${w} points` : `"${window}" = ${w} points`;
  if (w < MIN_WINDOW_POINTS) {
    throw new AnalysisInputError(`rolling window ${given}; at least ${MIN_WINDOW_POINTS} are needed (use a longer series or a wider window)`);
  }
  if (w > n) throw new AnalysisInputError(`rolling window ${given} is longer than the ${n} points analysed`);
  return w;
}

/** Centred moments of every window r[s..s+w−1], s = 0..n−w (length n − w + 1). */
export interface WindowMoments {
  mean: Float64Array;
  /** Σ(r − r̄)² */
  m2: Float64Array;
  /** Σ(r − r̄)³ (only when order 4 was asked for) */
  m3: Float64Array;
  /** Σ(r − r̄)⁴ (only when order 4 was asked for) */
  m4: Float64Array;
  /** Σ_{j=1}^{w−1}(r_j − r̄)(r_{j+1} − r̄) (only when order 4 was asked for) */
  lag: Float64Array;
}

/**
 * Centred moments of a window of k points from its power sums about a shift c (y = r − c): with ȳ = S1/k,
 * M2 = S2 − k ȳ², M3 = S3 − 3ȳ S2 + 2k ȳ³, M4 = S4 − 4ȳ S3 + 6ȳ² S2 − 3k ȳ⁴, lag = P − ȳ(2 S1 − y_first − y_last) + (k−1) ȳ²
 * (P = Σ y_j y_{j+1}). O(1). Source: Chan, Golub & LeVeque (1983), Am. Stat. 37, 242–247 (shifted sums).
 */
export function centredMoments(k: number, s1: number, s2: number, s3: number, s4: number, p: number, first: number, last: number) {
  const yb = s1 / k;
  const yb2 = yb * yb;
  return {
    m2: Math.max(0, s2 - s1 * yb),
    m3: s3 - 3 * yb * s2 + 2 * k * yb2 * yb,
    m4: Math.max(0, s4 - 4 * yb * s3 + 6 * yb2 * s2 - 3 * k * yb2 * yb2),
    lag: p - yb * (2 * s1 - first - last) + (k - 1) * yb2,
  };
}

/**
 * Sliding power sums of every window of w points. Values are shifted by a window-local centre c
 * (the corrected mean of the window where the block starts) and the sums are recomputed from scratch
 * every ⌈w/4⌉ steps, so offsets such as NIST NumAcc's 1e7 and long runs cost no digits; between
 * re-anchorings each step adds one point and drops one. From S_k = Σ y^k (y = r − c), ȳ = S1/w:
 * M2 = S2 − w ȳ², M3 = S3 − 3ȳ S2 + 2w ȳ³, M4 = S4 − 4ȳ S3 + 6ȳ² S2 − 3w ȳ⁴,
 * lag = P − ȳ(head + tail) + (w−1) ȳ² with P = Σ y_j y_{j+1}, head/tail the sums without the last/first point.
 * Cost O(n) (≈ 5n for the re-anchoring). Sources: Chan, Golub & LeVeque
 * (1983), "Algorithms for computing the sample variance", Am. Stat. 37, 242–247 (shifted sums);
 * NIST StRD univariate lag-1 autocorrelation definition.
 */
export function windowMoments(r: Float64Array, w: number): WindowMoments {
  const n = r.length;
  const count = Math.max(0, n - w + 1);
  const mean = new Float64Array(count);
  const m2 = new Float64Array(count);
  const m3 = new Float64Array(count);
  const m4 = new Float64Array(count);
  const lag = new Float64Array(count);
  const block = Math.max(1, Math.ceil(w / 4));
  for (let start = 0; start < count; start += block) {
    let c = 0;
    for (let i = start; i < start + w; i++) c += r[i];
    c /= w;
    let s1 = 0,
      s2 = 0,
      s3 = 0,
      s4 = 0,
      p = 0;
    for (let i = start; i < start + w; i++) {
      const y = r[i] - c;
      const y2 = y * y;
      s1 += y;
      s2 += y2;
      s3 += y2 * y;
      s4 += y2 * y2;
      if (i + 1 < start + w) p += y * (r[i + 1] - c);
    }
    const end = Math.min(count, start + block);
    for (let s = start; s < end; s++) {
      if (s > start) {
        const out = r[s - 1] - c;
        const inn = r[s + w - 1] - c;
        const o2 = out * out;
        const i2 = inn * inn;
        s1 += inn - out;
        s2 += i2 - o2;
        s3 += i2 * inn - o2 * out;
        s4 += i2 * i2 - o2 * o2;
        p += (r[s + w - 2] - c) * inn - out * (r[s] - c);
      }
      const m = centredMoments(w, s1, s2, s3, s4, p, r[s] - c, r[s + w - 1] - c);
      mean[s] = c + s1 / w;
      m2[s] = m.m2;
      m3[s] = m.m3;
      m4[s] = m.m4;
      lag[s] = m.lag;
    }
  }
  return { mean, m2, m3, m4, lag };
}

function finite(v: number): number {
  return Number.isFinite(v) ? v : Number.NaN;
}

function momentDefinition(name: IndicatorName): MomentIndicator {
  const definition = indicatorDefinition(name);
  if (definition?.kind !== 'moments') throw new RangeError(`${name} is not computed from window moments`);
  return definition;
}

/**
 * One moment indicator of a window of w points from its centred moments (see WindowMoments), by the definition its
 * file in lib/engine/indicators declares (formula, cost and source there); NaN where undefined. O(1).
 */
export function indicatorFromMoments(name: IndicatorName, w: number, m2: number, m3: number, m4: number, lag: number, rawMean: number, dt: number): number {
  return finite(momentDefinition(name).fromMoments({ w, m2, m3, m4, lag, rawMean, dt }));
}

/**
 * Every how many windows the per-window indicators are evaluated when at most `maxEvaluated` of the `count`
 * windows may be: ⌈count/maxEvaluated⌉ (1 when all fit). O(1).
 */
export function evaluationStride(count: number, maxEvaluated: number): number {
  return Math.max(1, Math.ceil(count / maxEvaluated));
}

/** Per-window companion values (a standard error, a p-value) of the indicators that declare them, by indicator and name. */
export type IndicatorCompanions = Partial<Record<IndicatorName, Record<string, Float64Array>>>;

/**
 * Rolling indicators over windows of w points ending at each index i ≥ w−1 (earlier entries NaN = none); windows
 * with skip[s] = 1 (unjudgedWindows) are NaN, exactly. Moment indicators (indicatorFromMoments) come from the sliding
 * moments of windowMoments at every window, O(n) each. Per-window indicators are evaluated on the window's residuals
 * at every `stride`-th window counted back from the latest (the latest is always evaluated; default every window),
 * NaN between, O(n/stride × their cost per window); their companion values go into `opts.companions` when given.
 */
export function rollingIndicators(
  residual: Float64Array,
  w: number,
  names: readonly IndicatorName[],
  opts: { raw?: Float64Array; rawMean?: Float64Array; dt: number; skip?: Uint8Array | null; stride?: number; companions?: IndicatorCompanions },
): Record<IndicatorName, Float64Array> {
  const n = residual.length;
  // Per-window indicators alone need no sliding moments.
  const none = new Float64Array(0);
  const { m2, m3, m4, lag } = names.some((name) => indicatorDefinition(name)?.kind === 'moments')
    ? windowMoments(residual, w)
    : { m2: none, m3: none, m4: none, lag: none };
  const count = Math.max(0, n - w + 1);
  let rawMean = opts.rawMean;
  if (!rawMean && needsRawMean(names)) rawMean = windowMoments(opts.raw ?? residual, w).mean;
  const out = {} as Record<IndicatorName, Float64Array>;
  const skip = opts.skip;
  // One moments record refilled per window: no allocation in the loop.
  const m: WindowMomentValues = { w, m2: 0, m3: 0, m4: 0, lag: 0, rawMean: Number.NaN, dt: opts.dt };
  for (const name of names) {
    const definition = indicatorDefinition(name)!;
    const values = new Float64Array(n).fill(Number.NaN);
    out[name] = values;
    if (definition.kind === 'window') {
      const extra = definition.companions.map(() => new Float64Array(n).fill(Number.NaN));
      if (opts.companions && extra.length) opts.companions[name] = Object.fromEntries(definition.companions.map((c, k) => [c, extra[k]]));
      for (let s = count - 1; s >= 0; s -= opts.stride ?? 1) {
        if (skip && skip[s]) continue;
        const v = definition.evaluate(residual.subarray(s, s + w), opts.dt);
        values[s + w - 1] = finite(v.value);
        extra.forEach((a, k) => (a[s + w - 1] = finite(v.companions?.[k] ?? Number.NaN)));
      }
      continue;
    }
    for (let s = 0; s < count; s++) {
      if (skip && skip[s]) continue;
      m.m2 = m2[s];
      m.m3 = m3[s];
      m.m4 = m4[s];
      m.lag = lag[s];
      m.rawMean = rawMean ? rawMean[s] : Number.NaN;
      values[s + w - 1] = finite(definition.fromMoments(m));
    }
  }
  return out;
}
