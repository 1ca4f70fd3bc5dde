import { accurateMean, gaussianSmooth, type DetrendMethod } from '@/lib/engine/detrend';
import { AnalysisInputError } from '@/lib/engine/errors';
import { inverseRealFft, nextPowerOfTwo, realFft } from '@/lib/engine/fft';
import { IncrementalKendall, SlidingMoments, denseRanks } from '@/lib/engine/incremental';
import { windowPoints } from '@/lib/engine/rolling';
import type { AnalysisSettings, IndicatorName } from '@/lib/engine/settings';
import { prepareSurrogateJob, surrogatePValue, surrogateTaus } from '@/lib/engine/surrogates';

/** The parts of an alert rule a replay judges (see lib/schemas/rule.ts for their meaning). */
export interface ReplayRule {
  indicator: IndicatorName;
  minTau: number;
  maxKendallP: number | null;
  maxSurrogateP: number | null;
  levelThreshold: number | null;
  levelDirection: 'above' | 'below';
  persistence: number;
  quietPeriodHours: number;
}

/** Fixed sizes of one replay, shared by the observed record and every surrogate. */
export interface ReplayGeometry {
  detrend: DetrendMethod;
  /** rolling window in points */
  w: number;
  /** Gaussian bandwidth in points (gaussian detrending only) */
  h: number;
  movingAverageWidth: number;
  /** residual points dropped at the start (1 for differencing) */
  offset: number;
  /** most indicator values in the trend test (trailing span), null = all */
  spanValues: number | null;
  /** indicator values needed before the rule is judged at all */
  warmup: number;
  /** sampling interval in ms, and in days (for the recovery rate) */
  interval: number;
  dt: number;
  /** judge every this many new points */
  every: number;
  /** surrogates per surrogate-p check (0 = the surrogate criterion is not judged) */
  surrogates: number;
  surrogateMethod: 'ar1' | 'phase';
  seed: number;
}

const DAY_MS = 86_400_000;
/** Fewest indicator values a trend is judged on; our own choice (a Kendall tau of a handful of values swings to ±1 by chance). */
const MIN_TREND_VALUES = 10;
/** Most surrogate-p checks in one replay; the count used is reported. */
export const MAX_SURROGATE_CHECKS = 100;

/**
 * Window and bandwidth in points are fixed for the whole replay at what the series' settings give for the
 * reference length nRef (the trailing span when one is set, else the whole prepared record), so every replay
 * instant uses one geometry, as the live analysis does once the record is that long. O(1).
 */
export function replayGeometry(settings: AnalysisSettings, nRef: number, interval: number, every: number): ReplayGeometry {
  const offset = settings.detrend === 'difference' ? 1 : 0;
  const w = windowPoints(settings.window, nRef - offset);
  return {
    detrend: settings.detrend,
    w,
    h: settings.bandwidth * nRef,
    movingAverageWidth: settings.movingAverageWidth,
    offset,
    spanValues: settings.spanPoints === null ? null : settings.spanPoints - offset - w + 1,
    warmup: Math.max(MIN_TREND_VALUES, Math.ceil(w / 4)),
    interval,
    dt: interval / DAY_MS,
    every,
    surrogates: settings.surrogates > 0 ? settings.surrogates : 99,
    surrogateMethod: settings.surrogateMethod,
    seed: settings.seed,
  };
}

/** exp(−d²/2h²) < 1e-17 beyond 8.86 h, as in lib/engine/detrend.ts. */
const GAUSS_REACH = 8.86;

/**
 * Point-in-time residuals: each point detrended with the trend of the record available when it arrived,
 * evaluated at that point, so a residual never changes afterwards and the rolling sums can be appended to.
 * gaussian: trend_i = Σ_{d=0}^{min(i,L)} K_d x_{i−d} / Σ K_d, K_d = exp(−d²/2h²), L = ⌈8.86h⌉ — exactly the
 * Nadaraya–Watson trend of the prefix x_0..x_i at its last point (gaussianSmooth(prefix)[i]); one causal FFT
 * convolution for all i, O(n log n) (direct sums when L is small). moving-average: mean of x_{i−r}..x_i, the
 * engine's end-truncated centred mean of the prefix at its end, O(1) per point. linear: OLS line of the
 * prefix at i, from Welford-updated means and co-moments, O(1) per point. none: x; difference: x_{i+1} − x_i.
 * Sources: Nadaraya (1964); Watson (1964); Welford (1962), Technometrics 4, 419–420 (from memory).
 */
export function pointInTimeResiduals(x: Float64Array, g: Pick<ReplayGeometry, 'detrend' | 'h' | 'movingAverageWidth'>): Float64Array {
  const n = x.length;
  if (g.detrend === 'difference') {
    const r = new Float64Array(Math.max(0, n - 1));
    for (let i = 0; i + 1 < n; i++) r[i] = x[i + 1] - x[i];
    return r;
  }
  const r = new Float64Array(n);
  if (g.detrend === 'none') {
    r.set(x);
  } else if (g.detrend === 'moving-average') {
    const acc = new SlidingMoments((g.movingAverageWidth - 1) / 2 + 1);
    for (let i = 0; i < n; i++) {
      acc.push(x[i]);
      r[i] = x[i] - acc.mean();
    }
  } else if (g.detrend === 'linear') {
    let mx = 0, my = 0, cxx = 0, cxy = 0;
    for (let i = 0; i < n; i++) {
      const k = i + 1;
      const dx = i - mx;
      const dy = x[i] - my;
      mx += dx / k;
      my += dy / k;
      cxx += dx * (i - mx);
      cxy += dx * (x[i] - my);
      const slope = cxx > 0 ? cxy / cxx : 0;
      r[i] = x[i] - (my + slope * (i - mx));
    }
  } else {
    causalGaussianResidual(x, g.h, r);
  }
  return r;
}

function causalGaussianResidual(x: Float64Array, h: number, out: Float64Array): void {
  const n = x.length;
  if (!(h > 0)) throw new AnalysisInputError(`bandwidth must be positive (got ${h} points)`);
  const L = Math.min(n - 1, Math.ceil(GAUSS_REACH * h));
  const kernel = new Float64Array(L + 1);
  for (let d = 0; d <= L; d++) kernel[d] = Math.exp(-(d * d) / (2 * h * h));
  const cum = new Float64Array(L + 1);
  let acc = 0;
  for (let d = 0; d <= L; d++) cum[d] = acc += kernel[d];
  // Centring first keeps large offsets from costing digits (weights sum to one).
  const mean = accurateMean(x);
  const c = Float64Array.from(x, (v) => v - mean);
  let num: Float64Array;
  if (L <= 64) {
    num = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let d = 0, top = Math.min(i, L); d <= top; d++) s += kernel[d] * c[i - d];
      num[i] = s;
    }
  } else {
    const size = nextPowerOfTwo(n + L);
    const X = realFft(c, size);
    const kc = new Float64Array(size);
    kc.set(kernel);
    const K = realFft(kc, size);
    for (let m = 0; m <= size >> 1; m++) {
      const re = X.re[m] * K.re[m] - X.im[m] * K.im[m];
      X.im[m] = X.re[m] * K.im[m] + X.im[m] * K.re[m];
      X.re[m] = re;
    }
    num = inverseRealFft(X.re, X.im, size);
  }
  for (let i = 0; i < n; i++) out[i] = c[i] - num[i] / cum[Math.min(i, L)];
}

/** The rule's indicator for the window ending at each residual index (NaN before the window fills), by SlidingMoments. O(n). */
export function indicatorStream(residual: Float64Array, raw: Float64Array, name: IndicatorName, g: Pick<ReplayGeometry, 'w' | 'dt'>): Float64Array {
  const n = residual.length;
  const out = new Float64Array(n).fill(Number.NaN);
  const acc = new SlidingMoments(g.w);
  const rawAcc = name === 'cv' ? new SlidingMoments(g.w) : null;
  for (let i = 0; i < n; i++) {
    acc.push(residual[i]);
    rawAcc?.push(raw[i]);
    if (acc.full) out[i] = acc.indicator(name, { dt: g.dt, rawMean: rawAcc?.mean() });
  }
  return out;
}

/** Evidence at each replay instant. */
export interface Evidence {
  /** record index of the newest point at each judged instant */
  index: Int32Array;
  time: Float64Array;
  tau: Float64Array;
  p: Float64Array;
  /** latest indicator value */
  level: Float64Array;
  /** indicator values in the trend test */
  count: Int32Array;
}

/**
 * Kendall tau and p of the indicator values available at every `every`-th point (and at the last), with the
 * trend set growing (or sliding over the trailing span) through IncrementalKendall. Instants with fewer than
 * `warmup` values are not judged. Cost O(n + m log m).
 */
export function replayEvidence(stream: Float64Array, time: Float64Array, g: Pick<ReplayGeometry, 'offset' | 'spanValues' | 'warmup' | 'every'>): Evidence {
  const { ranks, size } = denseRanks(stream);
  const n = stream.length;
  const kendall = new IncrementalKendall(Math.max(1, size), (g.spanValues ?? n) + 1);
  const idx: number[] = [];
  const tau: number[] = [];
  const p: number[] = [];
  const level: number[] = [];
  const count: number[] = [];
  // residual indices of the values held, oldest first, so the trailing span can drop what falls out of it
  const held = new Int32Array(n);
  let head = 0;
  let tail = 0;
  for (let e = 0; e < n; e++) {
    if (ranks[e] >= 0) {
      kendall.push(ranks[e]);
      held[tail++] = e;
    }
    if (g.spanValues !== null) {
      while (head < tail && held[head] <= e - g.spanValues) {
        kendall.shift();
        head++;
      }
    }
    const k = e + g.offset;
    if ((k + 1) % g.every !== 0 && e !== n - 1) continue;
    if (kendall.length < g.warmup) continue;
    const r = kendall.result();
    idx.push(k);
    tau.push(r.tau);
    p.push(r.p);
    level.push(stream[e]);
    count.push(r.n);
  }
  const index = Int32Array.from(idx);
  return {
    index,
    time: Float64Array.from(idx, (k) => time[k]),
    tau: Float64Array.from(tau),
    p: Float64Array.from(p),
    level: Float64Array.from(level),
    count: Int32Array.from(count),
  };
}

/** Whether the rule's criteria other than tau and the surrogate p hold at step s. */
export function otherCriteriaHold(ev: Evidence, s: number, rule: ReplayRule): boolean {
  if (!Number.isFinite(ev.tau[s])) return false;
  if (rule.maxKendallP !== null && !(ev.p[s] <= rule.maxKendallP)) return false;
  if (rule.levelThreshold !== null) {
    const v = ev.level[s];
    if (!(rule.levelDirection === 'above' ? v >= rule.levelThreshold : v <= rule.levelThreshold)) return false;
  }
  return true;
}

export interface Onset {
  step: number;
  index: number;
  time: number;
  tau: number;
  p: number;
  surrogateP: number | null;
}

/**
 * Alarm onsets: a step passes when tau ≥ threshold and the other criteria hold; an alarm opens when `persistence`
 * steps in a row pass and none is open, stays open while steps pass, and a new onset within the quiet period
 * of the previous one is not counted. With a surrogate-p criterion, a would-be onset also needs the surrogate
 * p of the prefix ≤ maxSurrogateP (checked through `surrogateP`, at most MAX_SURROGATE_CHECKS times). O(steps).
 */
export function alarmOnsets(
  ev: Evidence,
  rule: ReplayRule,
  threshold: number,
  surrogateP?: (step: number) => number | null,
): { onsets: Onset[]; surrogateChecks: number } {
  const onsets: Onset[] = [];
  const quietMs = rule.quietPeriodHours * 3_600_000;
  let streak = 0;
  let open = false;
  let checks = 0;
  for (let s = 0; s < ev.tau.length; s++) {
    const pass = ev.tau[s] >= threshold && otherCriteriaHold(ev, s, rule);
    if (!pass) {
      streak = 0;
      open = false;
      continue;
    }
    streak++;
    if (open || streak < rule.persistence) continue;
    let sp: number | null = null;
    if (rule.maxSurrogateP !== null && surrogateP) {
      if (checks >= MAX_SURROGATE_CHECKS) continue;
      checks++;
      sp = surrogateP(s);
      if (sp === null || sp > rule.maxSurrogateP) continue;
    }
    open = true;
    const last = onsets[onsets.length - 1];
    if (last && ev.time[s] - last.time < quietMs) continue;
    onsets.push({ step: s, index: ev.index[s], time: ev.time[s], tau: ev.tau[s], p: ev.p[s], surrogateP: sp });
  }
  return { onsets, surrogateChecks: checks };
}

/**
 * The largest tau threshold at which the rule would have fired within steps [from, to): the maximum over runs
 * of `persistence` consecutive steps (the other criteria holding throughout) of the smallest tau in the run;
 * −Infinity if it would fire at no threshold. Firing at threshold θ ⇔ statistic ≥ θ, so one number per stretch
 * gives the whole ROC. Cost O((to − from)·persistence).
 */
export function firingStatistic(ev: Evidence, rule: ReplayRule, from = 0, to = ev.tau.length): number {
  let best = Number.NEGATIVE_INFINITY;
  const P = rule.persistence;
  for (let s = from + P - 1; s < to; s++) {
    let m = Number.POSITIVE_INFINITY;
    for (let j = s - P + 1; j <= s && m > best; j++) m = otherCriteriaHold(ev, j, rule) ? Math.min(m, ev.tau[j]) : Number.NEGATIVE_INFINITY;
    if (m > best) best = m;
  }
  return best;
}

/** A record replayed: its point-in-time residual and the evidence at every judged instant. O(n log n). */
export function replayRecord(value: Float64Array, time: Float64Array, rule: ReplayRule, g: ReplayGeometry): { residual: Float64Array; evidence: Evidence } {
  const residual = pointInTimeResiduals(value, g);
  const stream = indicatorStream(residual, value.subarray(g.offset), rule.indicator, g);
  return { residual, evidence: replayEvidence(stream, time, g) };
}

/**
 * Surrogate p of the prefix ending at record index k, from the same surrogates the live analysis would draw
 * for that prefix (lib/engine/surrogates.ts), with the replay's tau as the observed value. O(N·n log n).
 */
export function prefixSurrogateP(residual: Float64Array, value: Float64Array, k: number, tau: number, rule: ReplayRule, g: ReplayGeometry): number | null {
  const e = k - g.offset + 1;
  const start = g.spanValues === null ? 0 : Math.max(0, e - (g.spanValues + g.w - 1));
  const r = residual.subarray(start, e);
  if (r.length < g.w + 2) return null;
  const job = prepareSurrogateJob(r, value.subarray(g.offset + start, g.offset + e), {
    method: g.surrogateMethod,
    seed: g.seed,
    w: g.w,
    dt: g.dt,
    indicators: [rule.indicator],
  });
  return surrogatePValue(tau, surrogateTaus(job, 0, g.surrogates)[rule.indicator]).p;
}
