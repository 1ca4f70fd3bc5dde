import { twoSidedNormalP } from './normal';
import { centredMoments, indicatorFromMoments } from './rolling';
import { indicatorDefinition, type IndicatorName } from './indicators';

/**
 * Centred moments of the last `w` values pushed (fewer while the window fills), updated in O(1) per push.
 * Values are kept as y = x − c about a shift c (the corrected mean of the window at the last re-anchoring);
 * the power sums S_k = Σ y^k and the lag sum P = Σ y_j y_{j+1} gain the new point and lose the oldest at each
 * push, and every ⌈w/4⌉ pushes they are recomputed from the ring buffer about a fresh shift (O(w), so O(1)
 * amortised), which bounds the cancellation of large offsets and long runs exactly as lib/engine/rolling.ts
 * does. From ȳ = S1/k: M2 = S2 − k ȳ², M3 = S3 − 3ȳ S2 + 2k ȳ³, M4 = S4 − 4ȳ S3 + 6ȳ² S2 − 3k ȳ⁴,
 * lag = P − ȳ(2 S1 − first − last) + (k−1) ȳ². Memory O(w). Sources: Chan, Golub & LeVeque (1983),
 * Am. Stat. 37, 242–247 (shifted sums); Welford (1962), Technometrics 4, 419–420 (updating, from memory).
 */
export class SlidingMoments {
  readonly w: number;
  private readonly ring: Float64Array;
  /** index of the oldest value in the ring */
  private head = 0;
  private k = 0;
  private pushes = 0;
  private readonly block: number;
  private c = 0;
  private s1 = 0;
  private s2 = 0;
  private s3 = 0;
  private s4 = 0;
  private p = 0;

  constructor(w: number) {
    if (!(Number.isInteger(w) && w >= 1)) throw new RangeError(`window must be a positive integer (got ${w})`);
    this.w = w;
    this.ring = new Float64Array(w);
    this.block = Math.max(1, Math.ceil(w / 4));
  }

  /** Points currently in the window (w once it is full). */
  get count(): number {
    return this.k;
  }

  get full(): boolean {
    return this.k === this.w;
  }

  private at(j: number): number {
    return this.ring[(this.head + j) % this.w];
  }

  /** Appends x, dropping the oldest value once the window is full. O(1) amortised. */
  push(x: number): void {
    const w = this.w;
    if (this.k === w) {
      const out = this.ring[this.head] - this.c;
      const second = this.k > 1 ? this.at(1) - this.c : 0;
      const last = this.at(this.k - 1) - this.c;
      this.ring[this.head] = x;
      this.head = (this.head + 1) % w;
      const inn = x - this.c;
      const o2 = out * out;
      const i2 = inn * inn;
      this.s1 += inn - out;
      this.s2 += i2 - o2;
      this.s3 += i2 * inn - o2 * out;
      this.s4 += i2 * i2 - o2 * o2;
      this.p += last * inn - out * second;
    } else {
      const prev = this.k > 0 ? this.at(this.k - 1) - this.c : 0;
      this.ring[(this.head + this.k) % w] = x;
      this.k++;
      const y = x - this.c;
      const y2 = y * y;
      this.s1 += y;
      this.s2 += y2;
      this.s3 += y2 * y;
      this.s4 += y2 * y2;
      if (this.k > 1) this.p += prev * y;
    }
    if (++this.pushes % this.block === 0) this.reanchor();
  }

  /** Recomputes the sums about the window's corrected mean (Higham's corrected two-pass mean). O(w). */
  private reanchor(): void {
    const k = this.k;
    let m = 0;
    for (let j = 0; j < k; j++) m += this.at(j);
    m /= k;
    let corr = 0;
    for (let j = 0; j < k; j++) corr += this.at(j) - m;
    this.c = m + corr / k;
    let s1 = 0,
      s2 = 0,
      s3 = 0,
      s4 = 0,
      p = 0,
      prev = 0;
    for (let j = 0; j < k; j++) {
      const y = this.at(j) - this.c;
      const y2 = y * y;
      s1 += y;
      s2 += y2;
      s3 += y2 * y;
      s4 += y2 * y2;
      if (j > 0) p += prev * y;
      prev = y;
    }
    this.s1 = s1;
    this.s2 = s2;
    this.s3 = s3;
    this.s4 = s4;
    this.p = p;
  }

  /** The window's values in order, oldest first (a copy). O(w). */
  values(): Float64Array {
    const out = new Float64Array(this.k);
    const tail = Math.min(this.k, this.w - this.head);
    out.set(this.ring.subarray(this.head, this.head + tail));
    out.set(this.ring.subarray(0, this.k - tail), tail);
    return out;
  }

  mean(): number {
    return this.c + this.s1 / this.k;
  }

  /** { m2, m3, m4, lag } of the current window, as defined in lib/engine/rolling.ts (WindowMoments). O(1). */
  moments(): { m2: number; m3: number; m4: number; lag: number } {
    return centredMoments(this.k, this.s1, this.s2, this.s3, this.s4, this.p, this.at(0) - this.c, this.at(this.k - 1) - this.c);
  }

  /**
   * One indicator of the current window, by the definitions of rollingIndicators: O(1) for a moment indicator
   * (indicatorFromMoments); a per-window indicator is evaluated on the window's values in order, O(its cost per window).
   */
  indicator(name: IndicatorName, opts: { dt: number; rawMean?: number }): number {
    const definition = indicatorDefinition(name);
    if (definition?.kind === 'window') {
      const v = definition.evaluate(this.values(), opts.dt).value;
      return Number.isFinite(v) ? v : Number.NaN;
    }
    const { m2, m3, m4, lag } = this.moments();
    return indicatorFromMoments(name, this.k, m2, m3, m4, lag, opts.rawMean ?? this.mean(), opts.dt);
  }
}

/**
 * Dense ranks of the finite values (equal values share a rank, 0-based, ascending); −1 for non-finite.
 * Cost O(m log m). Common practice (coordinate compression).
 */
export function denseRanks(values: Float64Array): { ranks: Int32Array; size: number } {
  const idx: number[] = [];
  for (let i = 0; i < values.length; i++) if (Number.isFinite(values[i])) idx.push(i);
  idx.sort((a, b) => values[a] - values[b]);
  const ranks = new Int32Array(values.length).fill(-1);
  let r = -1;
  let prev = Number.NaN;
  for (const i of idx) {
    if (values[i] !== prev) {
      r++;
      prev = values[i];
    }
    ranks[i] = r;
  }
  return { ranks, size: r + 1 };
}

/**
 * Kendall's tau-b of a sequence against its time order, kept up to date as values are appended at the end
 * and (for a sliding set) dropped from the front. The values are given as dense ranks (denseRanks) so a
 * Fenwick tree over ranks answers "how many earlier values are smaller / larger" in O(log r):
 * appending y adds #(less) − #(greater) to S; dropping the oldest y0 takes away #(greater) − #(less) of
 * the rest. Tie groups in y are tracked through per-rank counts, giving n2 = Σ t(t−1)/2 and
 * v1 = Σ t(t−1)(2t+5). Then, exactly as kendallTau(null, y) in lib/engine/kendall.ts (no ties in time):
 * τ_b = S/√(n0(n0 − n2)), Var(S) = [n(n−1)(2n+5) − v1]/18, p = 2(1 − Φ(|S|/√Var S)).
 * Cost O(log r) per update, O(m log m) for a whole replay. Sources: Kendall (1945), Biometrika 33,
 * 239–251; Fenwick (1994), Softw. Pract. Exper. 24, 327–336 (binary indexed tree).
 */
export class IncrementalKendall {
  private readonly tree: Int32Array;
  private readonly counts: Int32Array;
  private readonly queue: Int32Array;
  private qHead = 0;
  private n = 0;
  private s = 0;
  private n2 = 0;
  private v1 = 0;

  /** `size` ranks 0..size−1; `capacity` the most values held at once. */
  constructor(size: number, capacity: number) {
    this.tree = new Int32Array(size + 1);
    this.counts = new Int32Array(size);
    this.queue = new Int32Array(Math.max(1, capacity));
  }

  get length(): number {
    return this.n;
  }

  private add(rank: number, delta: number): void {
    for (let i = rank + 1; i < this.tree.length; i += i & -i) this.tree[i] += delta;
  }

  /** number of held values with rank < r */
  private below(r: number): number {
    let s = 0;
    for (let i = r; i > 0; i -= i & -i) s += this.tree[i];
    return s;
  }

  private tieChange(c: number, delta: 1 | -1): void {
    const f = (t: number) => t * (t - 1);
    const g = (t: number) => t * (t - 1) * (2 * t + 5);
    const d = c + delta;
    this.n2 += (f(d) - f(c)) / 2;
    this.v1 += g(d) - g(c);
  }

  push(rank: number): void {
    if (this.n === this.queue.length) throw new RangeError('IncrementalKendall is full');
    const less = this.below(rank);
    const greater = this.n - less - this.counts[rank];
    this.s += less - greater;
    this.tieChange(this.counts[rank], 1);
    this.counts[rank]++;
    this.add(rank, 1);
    this.queue[(this.qHead + this.n) % this.queue.length] = rank;
    this.n++;
  }

  /** Drops the oldest value. */
  shift(): void {
    const rank = this.queue[this.qHead];
    this.qHead = (this.qHead + 1) % this.queue.length;
    this.n--;
    this.add(rank, -1);
    this.counts[rank]--;
    this.tieChange(this.counts[rank] + 1, -1);
    const less = this.below(rank);
    const greater = this.n - less - this.counts[rank];
    this.s -= greater - less;
  }

  /** Current S, τ_b and two-sided p (NaN when fewer than 3 values or all tied). O(1). */
  result(): { s: number; tau: number; p: number; n: number } {
    const n = this.n;
    if (n < 3) return { s: this.s, tau: Number.NaN, p: Number.NaN, n };
    const n0 = (n * (n - 1)) / 2;
    const denom = Math.sqrt(n0 * (n0 - this.n2));
    const varS = (n * (n - 1) * (2 * n + 5) - this.v1) / 18;
    const tau = denom > 0 ? Math.max(-1, Math.min(1, this.s / denom)) : Number.NaN;
    const p = denom > 0 && varS > 0 ? twoSidedNormalP(this.s / Math.sqrt(varS)) : Number.NaN;
    return { s: this.s, tau, p, n };
  }
}
