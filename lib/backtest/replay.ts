import { unjudgedWindows } from '@/lib/engine/coverage';
import { GAUSS_REACH, accurateMean, gaussianKernelSums, type DetrendMethod } from '@/lib/engine/detrend';
import { AnalysisInputError } from '@/lib/engine/errors';
import { extentPoints } from '@/lib/engine/extent';
import { inverseRealFft, nextPowerOfTwo, realFft } from '@/lib/engine/fft';
import { IncrementalKendall, SlidingMoments, denseRanks } from '@/lib/engine/incremental';
import { spanPoints } from '@/lib/engine/prepare';
import type { TimeKind } from '@/lib/engine/time-kind';
import { indicatorDefinition } from '@/lib/engine/indicators';
import { indicatorTrend } from '@/lib/engine/kendall';
import { MIN_WINDOW_POINTS, evaluationStride, windowPoints } from '@/lib/engine/rolling';
import { DEFAULT_MIN_SEGMENT, detectShifts } from '@/lib/engine/shifts';
import { INDICATOR_DIRECTIONS, orientedTau, trendDirectionOf, type RuleDirection, type TrendDirection } from '@/lib/engine/direction';
import type { AnalysisSettings, IndicatorName } from '@/lib/engine/settings';
import { prepareSurrogateJob, surrogatePValue, surrogateTaus, type SurrogateJob } from '@/lib/engine/surrogates';

/** The parts of an alert rule a replay judges (see lib/schemas/rule.ts for their meaning). */
export interface ReplayRule {
  indicator: IndicatorName;
  /** which way tau is read (default: the indicator's own direction, 'either' for two-sided ones) */
  direction?: RuleDirection;
  /** threshold on tau read in the rule's direction (orientedTau) */
  minTau: number;
  /**
   * Ignored. The Kendall p assumes independent values, which overlapping windows are not, so it is no longer a
   * gate (issue 13); the field stays so stored rules and older callers still fit.
   */
  maxKendallP?: number | null;
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
  /** smoother bandwidth h in points, the Gaussian kernel's standard deviation (gaussian and local-linear detrending) */
  h: number;
  movingAverageWidth: number;
  /** residual points dropped at the start (1 for differencing) */
  offset: number;
  /** most indicator values in the trend test (trailing span), null = all */
  spanValues: number | null;
  /** indicator values needed before the rule is judged at all */
  warmup: number;
  /** sampling interval in the unit of time (ms for dates), and in the recovery-rate unit (days for dates) */
  interval: number;
  dt: number;
  /** judge every this many new points */
  every: number;
  /** surrogates per surrogate-p check: the series' setting, or 99 when it runs none (a live rule needing them is refused there) */
  surrogates: number;
  surrogateMethod: 'ar1' | 'phase';
  seed: number;
  /** share of observed (not interpolated) points a window needs to be judged */
  minCoverage: number;
  /** per-window indicators are evaluated at no more than this many windows of the record available then (settings) */
  maxEvaluatedWindows: number;
}

const DAY_MS = 86_400_000;
/** Fewest indicator values a trend is judged on; our own choice (a Kendall tau of a handful of values swings to ±1 by chance). */
const MIN_TREND_VALUES = 10;
/**
 * Most surrogate work one replay of a record may spend on surrogate-p checks, in surrogate points (Σ over checks
 * of N surrogates × prefix length): about a minute on one core of this machine, which draws and scores some
 * 2 million surrogate points a second (measured on AR(1) records of 2,000–4,000 points). Past it, instants
 * that need a check are reported as not judged, never silently skipped.
 */
export const SURROGATE_WORK_BUDGET = 1e8;

/** The rule's direction as a trend direction: the stored one, else the indicator's own. O(1). */
export function replayDirection(rule: Pick<ReplayRule, 'indicator' | 'direction'>): TrendDirection {
  return rule.direction ? trendDirectionOf(rule.direction) : INDICATOR_DIRECTIONS[rule.indicator];
}

/** The rule's direction as rules store it (two-sided → 'either'), for a record that may predate the field. O(1). */
export function ruleDirectionOf(rule: { indicator: IndicatorName; direction?: string | null }): RuleDirection {
  const d = rule.direction;
  if (d === 'rising' || d === 'falling' || d === 'either') return d;
  const own = INDICATOR_DIRECTIONS[rule.indicator];
  return own === 'two-sided' ? 'either' : own;
}

/**
 * Window, bandwidth and span in points, fixed for the whole replay at what the live analysis resolves from the
 * series' settings (extentPoints / windowPoints / spanPoints of lib/engine, so fractions, "<n> points" and ISO
 * 8601 durations read exactly as there): the span is cut from the whole prepared record of `recordPoints`
 * points, and window and bandwidth are resolved against the stretch the live analysis judges once the record is
 * that long (the span when one is set, else the whole record). `interval` is in the unit of time (ms for
 * 'utc-ms'). Throws AnalysisInputError where the live analysis would (e.g. a window of fewer than 8 points). O(1).
 */
export function replayGeometry(settings: AnalysisSettings, recordPoints: number, interval: number, every: number, kind: TimeKind = 'utc-ms'): ReplayGeometry {
  const offset = settings.detrend === 'difference' ? 1 : 0;
  const nRef = spanPoints(settings.span, recordPoints, interval, kind);
  const w = windowPoints(settings.window, nRef - offset, interval, kind);
  return {
    detrend: settings.detrend,
    w,
    h: extentPoints(settings.bandwidth, nRef, interval, kind),
    movingAverageWidth: settings.movingAverageWidth,
    offset,
    spanValues: settings.span === null ? null : nRef - offset - w + 1,
    warmup: Math.max(MIN_TREND_VALUES, Math.ceil(w / 4)),
    interval,
    dt: kind === 'utc-ms' ? interval / DAY_MS : interval,
    every,
    surrogates: settings.surrogates > 0 ? settings.surrogates : 99,
    surrogateMethod: settings.surrogateMethod,
    seed: settings.seed,
    minCoverage: settings.minCoverage,
    maxEvaluatedWindows: settings.maxEvaluatedWindows,
  };
}

/**
 * Point-in-time residuals: each point detrended with the trend of the record available when it arrived,
 * evaluated at that point, so a residual never changes afterwards and the rolling sums can be appended to.
 * With one-sided kernel weights K_d = exp(−d²/2h²), d = 0..min(i, L), L = ⌈8.86h⌉ (beyond it K_d < 1e-17, as
 * in lib/engine/detrend.ts), S_k = Σ K_d d^k and T_k = Σ K_d d^k x_{i−d}:
 * gaussian: trend_i = T0/S0, the Nadaraya–Watson trend of the prefix x_0..x_i at its last point
 * (gaussianSmooth(prefix)[i]); local-linear: trend_i = (S2·T0 − S1·T1)/(S0·S2 − S1²), the local-linear
 * Gaussian fit of the prefix at its last point (localLinearSmooth(prefix)[i]; T0/S0 where the fit is degenerate,
 * as there). T0 and T1 are causal convolutions (one FFT of the record, O(n log n); direct sums when L is small),
 * S_k cumulative sums of the kernel. moving-average: mean of x_{i−r}..x_i, the engine's end-truncated centred
 * mean of the prefix at its end, O(1) per point. linear: OLS line of the prefix at i, from Welford-updated means
 * and co-moments, O(1) per point. none: x; difference: x_{i+1} − x_i. Sources: Nadaraya (1964); Watson (1964);
 * Fan & Gijbels (1996), Local Polynomial Modelling and Its Applications, Ch. 3 (from memory); Welford (1962),
 * Technometrics 4, 419–420 (from memory).
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
    let mx = 0,
      my = 0,
      cxx = 0,
      cxy = 0;
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
    causalKernelResidual(x, g.h, g.detrend === 'local-linear', r);
  }
  return r;
}

/** Largest one-sided kernel reach summed directly; beyond it one FFT convolution is cheaper. */
const DIRECT_REACH = 64;

/**
 * Causal convolutions y_i = Σ_{d=0}^{min(i,L)} k_d c_{i−d} of c with each kernel (all of length L + 1): direct
 * sums for L ≤ 64, else real FFTs of a power-of-two length ≥ n + L (no wrap-around), the record's transform
 * shared by the kernels. O(n·L) or O(n log n). Source: convolution theorem, Bracewell (2000), Ch. 6.
 */
function causalConvolutions(c: Float64Array, kernels: Float64Array[]): Float64Array[] {
  const n = c.length;
  const L = kernels[0].length - 1;
  if (L <= DIRECT_REACH) {
    return kernels.map((k) => {
      const y = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        let s = 0;
        for (let d = 0, top = Math.min(i, L); d <= top; d++) s += k[d] * c[i - d];
        y[i] = s;
      }
      return y;
    });
  }
  const size = nextPowerOfTwo(n + L);
  const X = realFft(c, size);
  return kernels.map((k) => {
    const kc = new Float64Array(size);
    kc.set(k);
    const K = realFft(kc, size);
    const re = new Float64Array(X.re.length);
    const im = new Float64Array(X.im.length);
    for (let m = 0; m < re.length; m++) {
      re[m] = X.re[m] * K.re[m] - X.im[m] * K.im[m];
      im[m] = X.re[m] * K.im[m] + X.im[m] * K.re[m];
    }
    return inverseRealFft(re, im, size);
  });
}

/** Residuals of the one-sided Gaussian trend at each point (Nadaraya–Watson, or local-linear), see pointInTimeResiduals. */
function causalKernelResidual(x: Float64Array, h: number, localLinear: boolean, out: Float64Array): void {
  const n = x.length;
  if (!(h > 0)) throw new AnalysisInputError(`bandwidth must be positive (got ${h} points)`);
  const L = Math.max(0, Math.min(n - 1, Math.ceil(GAUSS_REACH * h)));
  const { k0, k1, s0, s1, s2 } = gaussianKernelSums(h, L);
  // Centring first keeps large offsets from costing digits (both smoothers reproduce a constant exactly).
  const mean = accurateMean(x);
  const c = Float64Array.from(x, (v) => v - mean);
  const [t0, t1] = causalConvolutions(c, localLinear ? [k0, k1] : [k0]);
  for (let i = 0; i < n; i++) {
    const top = Math.min(i, L);
    let trend = t0[i] / s0[top];
    if (localLinear) {
      const det = s0[top] * s2[top] - s1[top] * s1[top];
      if (det > 0) trend = (s2[top] * t0[i] - s1[top] * t1[i]) / det;
    }
    out[i] = c[i] - trend;
  }
}

/**
 * Whether the window ending at each residual index is judged, by the engine's rule (unjudgedWindows): at least
 * minCoverage·w observed (not interpolated) points, and not wholly inside a flat run (a stuck sensor; `flat`
 * as residual index ranges [start, end)). `inFlatRun` marks the windows left out only for lying in a flat run,
 * so the two reasons can be reported apart. O(n).
 */
function windowCoverage(
  observed: Uint8Array,
  flat: readonly { start: number; end: number }[],
  g: Pick<ReplayGeometry, 'w' | 'minCoverage'>,
): { covered: Uint8Array; inFlatRun: Uint8Array } {
  const all = unjudgedWindows(observed, flat, g.w, g.minCoverage).skip;
  const thin = flat.length > 0 ? unjudgedWindows(observed, [], g.w, g.minCoverage).skip : all;
  const covered = new Uint8Array(observed.length);
  const inFlatRun = new Uint8Array(observed.length);
  for (let s = 0; s < all.length; s++) {
    covered[s + g.w - 1] = all[s] ? 0 : 1;
    inFlatRun[s + g.w - 1] = all[s] && !thin[s] ? 1 : 0;
  }
  return { covered, inFlatRun };
}

/**
 * The rule's indicator for the window ending at each residual index (NaN before the window fills, and where
 * `covered` says the window is not judged: too few observed points, or inside a flat run), by SlidingMoments. O(n).
 */
export function indicatorStream(
  residual: Float64Array,
  raw: Float64Array,
  name: IndicatorName,
  g: Pick<ReplayGeometry, 'w' | 'dt'>,
  covered: Uint8Array | null = null,
): Float64Array {
  const n = residual.length;
  const out = new Float64Array(n).fill(Number.NaN);
  const acc = new SlidingMoments(g.w);
  const rawAcc = name === 'cv' ? new SlidingMoments(g.w) : null;
  for (let i = 0; i < n; i++) {
    acc.push(residual[i]);
    rawAcc?.push(raw[i]);
    if (acc.full && (covered === null || covered[i])) out[i] = acc.indicator(name, { dt: g.dt, rawMean: rawAcc?.mean() });
  }
  return out;
}

/** Evidence at each replay instant. */
/** The per-instant columns every Evidence has, sliced and joined column by column (the optional ones on their own). */
const EVIDENCE_COLUMNS = ['index', 'time', 'tau', 'p', 'level', 'count'] as const;

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
  /** 1 where the newest window is judged: it meets the coverage floor and lies in no flat run (absent: every window is) */
  covered?: Uint8Array;
  /** 1 where the newest window is not judged only because it lies in a flat run (absent: none does) */
  inFlatRun?: Uint8Array;
  /** record index where the analysed stretch of each instant starts (absent: the record's start) */
  from?: Int32Array;
}

/**
 * Kendall tau and p of the indicator values available at every `every`-th point (and at the last), with the
 * trend set growing (or sliding over the trailing span) through IncrementalKendall. Instants with fewer than
 * `warmup` values are not judged. Cost O(n + m log m).
 */
export function replayEvidence(
  stream: Float64Array,
  time: Float64Array,
  g: Pick<ReplayGeometry, 'offset' | 'spanValues' | 'warmup' | 'every'>,
  covered: Uint8Array | null = null,
  inFlatRun: Uint8Array | null = null,
): Evidence {
  const { ranks, size } = denseRanks(stream);
  const n = stream.length;
  const kendall = new IncrementalKendall(Math.max(1, size), (g.spanValues ?? n) + 1);
  const instants = evidenceCollector(g.offset, covered, inFlatRun);
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
    instants.add(e, kendall.result(), stream[e]);
  }
  return instants.evidence(time);
}

/**
 * Gathers the judged instants of a replay, by residual index e (record index e + offset), into an Evidence: the
 * trend's tau, p and count, the newest window's value, and whether that window is judged (`covered`, `inFlatRun`
 * at e, when given). O(1) per instant.
 */
function evidenceCollector(offset: number, covered: Uint8Array | null, inFlatRun: Uint8Array | null) {
  const idx: number[] = [];
  const tau: number[] = [];
  const p: number[] = [];
  const level: number[] = [];
  const count: number[] = [];
  const cover: number[] = [];
  const stuck: number[] = [];
  return {
    add(e: number, trend: { tau: number; p: number; n: number }, latest: number): void {
      idx.push(e + offset);
      tau.push(trend.tau);
      p.push(trend.p);
      level.push(latest);
      count.push(trend.n);
      cover.push(covered === null ? 1 : covered[e]);
      stuck.push(inFlatRun === null ? 0 : inFlatRun[e]);
    },
    evidence(time: Float64Array): Evidence {
      return {
        index: Int32Array.from(idx),
        time: Float64Array.from(idx, (k) => time[k]),
        tau: Float64Array.from(tau),
        p: Float64Array.from(p),
        level: Float64Array.from(level),
        count: Int32Array.from(count),
        ...(covered === null ? {} : { covered: Uint8Array.from(cover) }),
        ...(inFlatRun === null ? {} : { inFlatRun: Uint8Array.from(stuck) }),
      };
    },
  };
}

/**
 * Evidence of a per-window indicator (kind 'window') as the live analysis judges it at each instant: of the
 * `count` windows of the record available then (of its trailing span when one is set), the analysis evaluates
 * every s-th window counted back from the newest, s = evaluationStride(count, maxEvaluatedWindows), and takes the
 * Kendall tau over those values (rollingIndicators and runAnalysis in lib/engine). The stride, and with it the
 * windows evaluated, changes as the record grows, so each instant takes its own set; a window's value never
 * changes once its point-in-time residuals are known, so each is computed at most once. Windows `covered` leaves
 * out give no value, as there; instants with fewer than `warmup` windows are not judged. Cost O(steps · M log M),
 * M ≤ maxEvaluatedWindows, plus the indicator's cost per window for each window some instant evaluates.
 */
export function stridedEvidence(
  residual: Float64Array,
  time: Float64Array,
  name: IndicatorName,
  g: Pick<ReplayGeometry, 'w' | 'dt' | 'offset' | 'spanValues' | 'warmup' | 'every' | 'maxEvaluatedWindows'>,
  covered: Uint8Array | null = null,
  inFlatRun: Uint8Array | null = null,
): Evidence {
  const definition = indicatorDefinition(name);
  if (definition?.kind !== 'window') throw new RangeError(`${name} is not evaluated per window`);
  const n = residual.length;
  const values = new Float64Array(n);
  const known = new Uint8Array(n);
  const windowValue = (end: number): number => {
    if (!known[end]) {
      known[end] = 1;
      const v = covered === null || covered[end] ? definition.evaluate(residual.subarray(end - g.w + 1, end + 1), g.dt).value : Number.NaN;
      values[end] = Number.isFinite(v) ? v : Number.NaN;
    }
    return values[end];
  };
  const instants = evidenceCollector(g.offset, covered, inFlatRun);
  for (let e = g.w - 1; e < n; e++) {
    const k = e + g.offset;
    if ((k + 1) % g.every !== 0 && e !== n - 1) continue;
    const windows = g.spanValues === null ? e - g.w + 2 : Math.min(e - g.w + 2, g.spanValues);
    if (windows < g.warmup) continue;
    const stride = evaluationStride(windows, g.maxEvaluatedWindows);
    const picked = new Float64Array(Math.ceil(windows / stride));
    for (let end = e, slot = picked.length - 1; slot >= 0; end -= stride, slot--) picked[slot] = windowValue(end);
    instants.add(e, indicatorTrend(picked), picked[picked.length - 1]);
  }
  return instants.evidence(time);
}

/**
 * Whether step s passes the rule without its surrogate-p criterion: tau read in the rule's direction reaches
 * the threshold and the level test (if any) holds. The Kendall p is not a gate (see ReplayRule.maxKendallP). O(1).
 */
export function basePasses(ev: Evidence, s: number, rule: ReplayRule, threshold: number, direction = replayDirection(rule)): boolean {
  if (ev.covered && !ev.covered[s]) return false;
  const t = orientedTau(ev.tau[s], direction);
  if (!(t >= threshold)) return false;
  if (rule.levelThreshold !== null) {
    const v = ev.level[s];
    if (!(rule.levelDirection === 'above' ? v >= rule.levelThreshold : v <= rule.levelThreshold)) return false;
  }
  return true;
}

/** Answer of one surrogate-p check: the p (null when undefined), or 'over-budget' when the check was not made. */
export type SurrogateCheck = { p: number | null; passed: boolean } | 'over-budget';

export interface Onset {
  step: number;
  index: number;
  time: number;
  tau: number;
  p: number;
  surrogateP: number | null;
}

export interface OnsetReport {
  onsets: Onset[];
  /** surrogate-p checks made */
  surrogateChecks: number;
  /** steps that needed a surrogate-p check that the cost bound did not allow: not judged (neither passing nor failing) */
  notJudged: Int32Array;
  /** would-be onsets inside the quiet period of the previous onset (not counted as alarms) */
  quietSuppressed: number;
  /** of the not-judged steps, those whose newest window is below the coverage floor */
  belowCoverage: number;
  /** of the not-judged steps, those whose newest window lies in a flat run (a stuck sensor) */
  inFlatRun: number;
}

/**
 * Alarm onsets, judged as the live rule judges each analysis cycle (lib/alerts/evaluate.ts): a step passes when
 * basePasses holds and, with a surrogate-p criterion, the surrogate p of the record available then (in the
 * rule's direction) is at most maxSurrogateP; `persistence` passing steps in a row open an alarm; a failing step
 * resets the run. An open alarm stays open while basePasses holds (its surrogate p is not re-checked: the alert
 * would still be open in front of a person); a new onset within the quiet period of the previous one is not
 * counted. A step whose newest window is below the coverage floor or lies in a flat run is not judged (and breaks the run). The surrogate p is checked at every step that needs it while the caller's cost bound allows
 * (`check` answers 'over-budget' after that): such a step is reported as not judged and breaks the run, so a
 * cost bound never silently turns into missing or extra alarms. O(steps) plus the checks.
 */
export function alarmOnsets(ev: Evidence, rule: ReplayRule, threshold: number, check?: (step: number) => SurrogateCheck): OnsetReport {
  const direction = replayDirection(rule);
  const onsets: Onset[] = [];
  const notJudged: number[] = [];
  const quietMs = rule.quietPeriodHours * 3_600_000;
  let streak = 0;
  let open = false;
  let checks = 0;
  let quietSuppressed = 0;
  let belowCoverage = 0;
  let inFlatRun = 0;
  for (let s = 0; s < ev.tau.length; s++) {
    if (ev.from && s > 0 && ev.from[s] !== ev.from[s - 1]) {
      // a new stretch (after a marked tipping point) starts afresh, as the live analysis does
      streak = 0;
      open = false;
    }
    if (ev.covered && !ev.covered[s]) {
      // too few observed points in the newest window, or a stuck sensor: the live rule cannot judge this cycle either
      notJudged.push(s);
      if (ev.inFlatRun?.[s]) inFlatRun++;
      else belowCoverage++;
      streak = 0;
      continue;
    }
    if (!basePasses(ev, s, rule, threshold, direction)) {
      streak = 0;
      open = false;
      continue;
    }
    if (open) continue;
    let sp: number | null = null;
    if (rule.maxSurrogateP !== null) {
      const answer = check ? check(s) : 'over-budget';
      if (answer === 'over-budget') {
        notJudged.push(s);
        streak = 0;
        continue;
      }
      checks++;
      sp = answer.p;
      if (!answer.passed) {
        streak = 0;
        continue;
      }
    }
    if (++streak < rule.persistence) continue;
    open = true;
    const last = onsets[onsets.length - 1];
    if (last && ev.time[s] - last.time < quietMs) {
      quietSuppressed++;
      continue;
    }
    onsets.push({ step: s, index: ev.index[s], time: ev.time[s], tau: ev.tau[s], p: ev.p[s], surrogateP: sp });
  }
  return { onsets, surrogateChecks: checks, notJudged: Int32Array.from(notJudged), quietSuppressed, belowCoverage, inFlatRun };
}

/**
 * The largest threshold on tau (read in the rule's direction) at which the rule would have fired within steps
 * [from, to) on its tau and level criteria: the maximum over runs of `persistence` consecutive steps (the level
 * test holding throughout) of the smallest oriented tau in the run; −Infinity if it would fire at no
 * threshold. Firing at threshold θ ⇔ statistic ≥ θ, so one number per stretch gives a whole ROC. The
 * surrogate-p criterion does not depend on θ and is left out (it would cost N surrogates per step).
 * Cost O((to − from)·persistence).
 */
export function firingStatistic(ev: Evidence, rule: ReplayRule, from = 0, to = ev.tau.length): number {
  const direction = replayDirection(rule);
  let best = Number.NEGATIVE_INFINITY;
  const P = rule.persistence;
  for (let s = Math.max(0, from) + P - 1; s < to; s++) {
    let m = Number.POSITIVE_INFINITY;
    for (let j = s - P + 1; j <= s && m > best; j++) {
      const t = orientedTau(ev.tau[j], direction);
      const sameStretch = !ev.from || ev.from[j] === ev.from[s];
      m = sameStretch && Number.isFinite(t) && basePasses(ev, j, rule, Number.NEGATIVE_INFINITY, direction) ? Math.min(m, t) : Number.NEGATIVE_INFINITY;
    }
    if (m > best) best = m;
  }
  return best;
}

/** Where the live analysis cannot judge a record: its observed mask (1 observed, 0 interpolated) and its flat runs. */
export interface RecordQuality {
  observed: Uint8Array;
  /** flat runs as record index ranges [start, end) (prepareSeries's `flat`) */
  flat: readonly { start: number; end: number }[];
}

/**
 * A record replayed: its point-in-time residual and the evidence at every judged instant. With `quality`, windows
 * the live analysis would not judge (below the coverage floor, or inside a flat run) give no indicator value and
 * their instants are marked (Evidence.covered); with differencing a residual counts as observed when both its
 * points were, and flat runs move back by one, as in lib/engine/analyze.ts. O(n log n).
 */
function replayRecord(
  value: Float64Array,
  time: Float64Array,
  rule: ReplayRule,
  g: ReplayGeometry,
  quality: RecordQuality | null = null,
): { residual: Float64Array; evidence: Evidence } {
  const residual = pointInTimeResiduals(value, g);
  let covered: Uint8Array | null = null;
  let inFlatRun: Uint8Array | null = null;
  if (quality !== null && (quality.observed.includes(0) || quality.flat.length > 0)) {
    const o = quality.observed;
    const own = g.offset === 0 ? o : Uint8Array.from(residual, (_, i) => o[i] & o[i + 1]);
    const flat = quality.flat.map((r) => ({ start: Math.max(0, r.start - g.offset), end: r.end - g.offset })).filter((r) => r.end > r.start);
    ({ covered, inFlatRun } = windowCoverage(own, flat, g));
  }
  // Per-window indicators are judged on the windows the live analysis evaluates (its stride), moment ones on all.
  const evidence =
    indicatorDefinition(rule.indicator)?.kind === 'window'
      ? stridedEvidence(residual, time, rule.indicator, g, covered, inFlatRun)
      : replayEvidence(indicatorStream(residual, value.subarray(g.offset), rule.indicator, g, covered), time, g, covered, inFlatRun);
  return { residual, evidence };
}

function concat<T extends Float64Array | Int32Array | Uint8Array>(arrays: T[], Kind: { new (n: number): T }): T {
  const out = new Kind(arrays.reduce((a, v) => a + v.length, 0));
  let at = 0;
  for (const v of arrays) {
    (out as Float64Array).set(v, at);
    at += v.length;
  }
  return out;
}

/** The quality of the record between indices a and z (flat runs clipped and moved to the part's own indices). */
function qualityPart(q: RecordQuality | null, a: number, z: number): RecordQuality | null {
  if (q === null) return null;
  const flat = q.flat.map((r) => ({ start: Math.max(r.start, a) - a, end: Math.min(r.end, z) - a })).filter((r) => r.end > r.start);
  return { observed: q.observed.subarray(a, z), flat };
}

/**
 * Where a stretch restarts: the record index of the first point of the new stretch, and the first record index at
 * which the live analysis knows of it (a mark: the point itself; a detected shift: the first cycle whose record
 * shows it). Until then the previous stretch goes on, across the cut.
 */
export interface StretchCut {
  index: number;
  knownFrom: number;
}

/** Instants [lo, hi) of record indices of an evidence (its index is ascending), as views. O(log steps). */
function evidenceBetween(ev: Evidence, lo: number, hi: number): Evidence {
  let a = 0;
  while (a < ev.index.length && ev.index[a] < lo) a++;
  let z = a;
  while (z < ev.index.length && ev.index[z] < hi) z++;
  const out = {} as Evidence;
  for (const column of EVIDENCE_COLUMNS) (out as unknown as Record<string, Int32Array | Float64Array>)[column] = ev[column].subarray(a, z);
  if (ev.covered) out.covered = ev.covered.subarray(a, z);
  if (ev.inFlatRun) out.inFlatRun = ev.inFlatRun.subarray(a, z);
  return out;
}

/**
 * A record replayed as the live analysis sees it across breaks: the analysed stretch restarts at each cut (the
 * first point at or after a marked tipping point or maintenance break, or the first point of a detected shift's
 * new level; a plain number is known from itself). An instant k is judged on the stretch from the latest cut
 * known by then (knownFrom ≤ k), so every stretch is replayed on its own (replayRecord) up to the instant a later
 * cut becomes known, and its evidence carries `from`, the stretch's first record index. `residuals` maps each
 * stretch's first record index to its point-in-time residual (from that index on). Stretches too short for a
 * window and its warm-up give no instants. O(n log n) per stretch.
 */
export function replayStretches(
  value: Float64Array,
  time: Float64Array,
  rule: ReplayRule,
  g: ReplayGeometry,
  quality: RecordQuality | null,
  cuts: readonly (number | StretchCut)[],
): { residuals: Map<number, Float64Array>; evidence: Evidence } {
  const n = value.length;
  const known = new Map<number, number>([[0, 0]]);
  for (const c of cuts) {
    const { index, knownFrom } = typeof c === 'number' ? { index: c, knownFrom: c } : c;
    if (index > 0 && index < n) known.set(index, Math.min(known.get(index) ?? Infinity, Math.max(index, knownFrom)));
  }
  const starts = [...known.keys()].sort((a, b) => a - b);
  const residuals = new Map<number, Float64Array>();
  const parts: Evidence[] = [];
  const froms: number[] = [];
  for (let b = 0; b < starts.length; b++) {
    const a = starts[b];
    const lo = known.get(a)!;
    // the stretch holds until a later cut becomes known (an earlier cut known later never replaces it)
    let hi = n;
    for (let c = b + 1; c < starts.length; c++) hi = Math.min(hi, known.get(starts[c])!);
    if (hi <= lo || hi - a - g.offset < g.w + g.warmup) continue;
    const part = replayRecord(value.subarray(a, hi), time.subarray(a, hi), rule, g, qualityPart(quality, a, hi));
    residuals.set(a, part.residual);
    for (let s = 0; s < part.evidence.index.length; s++) part.evidence.index[s] += a;
    const ev = evidenceBetween(part.evidence, lo, hi);
    parts.push(ev);
    froms.push(a);
  }
  const lengths = parts.map((e) => e.index.length);
  const from = Int32Array.from(lengths.flatMap((k, i) => new Array<number>(k).fill(froms[i])));
  const evidence = { from } as Evidence;
  for (const column of EVIDENCE_COLUMNS)
    (evidence as unknown as Record<string, Int32Array | Float64Array>)[column] = concat(
      parts.map((e) => e[column]),
      (column === 'index' || column === 'count' ? Int32Array : Float64Array) as { new (n: number): Int32Array | Float64Array },
    );
  if (parts.some((e) => e.covered))
    evidence.covered = concat(
      parts.map((e) => e.covered ?? new Uint8Array(e.index.length).fill(1)),
      Uint8Array,
    );
  if (parts.some((e) => e.inFlatRun))
    evidence.inFlatRun = concat(
      parts.map((e) => e.inFlatRun ?? new Uint8Array(e.index.length)),
      Uint8Array,
    );
  return { residuals, evidence };
}

/** Points either side within which a shift found on a prefix is taken to be the one found on the whole record. */
const SHIFT_MATCH_POINTS = 2 * DEFAULT_MIN_SEGMENT;

/**
 * Where the stretch restarts because of the record itself, and from when the live analysis would know it. The
 * engine's detector (detectShifts, as runAnalysis calls it, when the settings detect shifts) is run once on the
 * whole prepared record; for each shift found, prefixes x_0..x_k, cut to the trailing span a live cycle analyses,
 * are searched with the same detector from k = index + minSegment − 1 on, and the first k whose prefix shows a
 * shift within 10 points of it is when a live cycle would first have restarted there (knownFrom = k). The search
 * gallops (k at 1, 2, 4, … points further) and then bisects, which finds that first k on the assumption that a
 * prefix showing the shift is followed only by longer prefixes that show it too (more points of the new level
 * only add evidence); a detection that flickers may be placed a little late. It stops w + warm-up points after
 * the shift, where the new stretch's first instant could come (the shift then counts as known from there,
 * earlier than a live cycle would know it). A shift that only some prefix would report, and the whole record
 * does not, is not replayed. Cost O(n) plus the detector's search, once and O(log(w)) times per shift found.
 */
export function shiftCuts(
  x: Float64Array,
  settings: Pick<AnalysisSettings, 'shiftDetection'>,
  g: Pick<ReplayGeometry, 'w' | 'warmup' | 'offset' | 'spanValues'>,
): StretchCut[] {
  if (settings.shiftDetection !== 'on' || x.length < 2 * MIN_WINDOW_POINTS) return [];
  // points a live cycle analyses: the trailing span (spanValues indicator values need spanValues + w − 1 residuals)
  const keep = g.spanValues === null ? x.length : g.spanValues + g.w - 1 + g.offset;
  return detectShifts(x).map(({ index }) => {
    const last = Math.min(x.length - 1, index + g.w + g.warmup);
    const shows = (k: number) => {
      const from = Math.max(0, k + 1 - keep);
      return k + 1 - from >= 2 * MIN_WINDOW_POINTS && detectShifts(x.subarray(from, k + 1)).some((s) => Math.abs(s.index + from - index) <= SHIFT_MATCH_POINTS);
    };
    // Galloping, then bisection between the last prefix that does not show it and the first that does.
    let lo = index + DEFAULT_MIN_SEGMENT - 2;
    let hi = -1;
    for (let step = 1; lo < last; step *= 2) {
      const k = Math.min(last, lo + step);
      if (shows(k)) {
        hi = k;
        break;
      }
      lo = k;
    }
    if (hi < 0) return { index, knownFrom: last };
    while (hi - lo > 1) {
      const mid = (lo + hi) >> 1;
      if (shows(mid)) hi = mid;
      else lo = mid;
    }
    return { index, knownFrom: hi };
  });
}

/**
 * Surrogate p of an observed tau against surrogates 0..N−1 of `job`, in `direction`:
 * p = (1 + #{o(τ_s) ≥ o(τ)})/(N_def + 1) with o = orientedTau (rising: τ; falling: −τ; two-sided: |τ|), over the
 * N_def surrogates with a defined tau — the Monte Carlo p of Davison & Hinkley (1997), Sec. 4.2.1 (from memory).
 * With `alpha`, drawing stops as soon as p ≤ alpha has become impossible (1 + exceedances > alpha·(N + 1)):
 * the decision is exactly that of all N draws, at a fraction of the cost on ordinary instants (the stopping
 * idea of Besag & Clifford 1991, Biometrika 78, 301–304, from memory); the p returned is then null.
 * Cost O(N_drawn · n log n).
 */
export function surrogateDecision(
  job: SurrogateJob,
  observed: number,
  direction: TrendDirection,
  N: number,
  indicator: IndicatorName,
  alpha: number | null,
): { p: number | null; passed: boolean; drawn: number } {
  const o = orientedTau(observed, direction);
  if (!Number.isFinite(o)) return { p: null, passed: false, drawn: 0 };
  const taus = new Float64Array(N);
  let exceed = 0;
  for (let k = 0; k < N; k++) {
    const t = orientedTau(surrogateTaus(job, k, k + 1)[indicator][0], direction);
    taus[k] = t;
    if (t >= o) exceed++;
    if (alpha !== null && 1 + exceed > alpha * (N + 1)) return { p: null, passed: false, drawn: k + 1 };
  }
  const p = surrogatePValue(o, taus).p;
  return { p, passed: p !== null && (alpha === null || p <= alpha), drawn: N };
}

/**
 * A surrogate-p checker for alarmOnsets on one replayed record: at step s it draws the surrogates the live
 * analysis would draw for the record available then (the point-in-time residual of the prefix, or of its
 * trailing span; lib/engine/surrogates.ts) and judges the replay's tau against them in the rule's direction.
 * `budget` bounds Σ drawn surrogates × prefix length (give or take the last check); once spent, it answers
 * 'over-budget'. With
 * `decisionOnly`, draws stop once the decision is known (surrogateDecision). O(N · n log n) per check.
 */
export function prefixSurrogateChecker(
  residuals: Map<number, Float64Array>,
  value: Float64Array,
  ev: Evidence,
  rule: ReplayRule,
  g: ReplayGeometry,
  options: { budget?: number; decisionOnly?: boolean; seed?: number; quality?: RecordQuality | null } = {},
): { check: (step: number) => SurrogateCheck; spent: () => number } {
  const direction = replayDirection(rule);
  let left = options.budget ?? SURROGATE_WORK_BUDGET;
  let spent = 0;
  const check = (s: number): SurrogateCheck => {
    const e = ev.index[s] - g.offset + 1;
    const stretchStart = ev.from ? ev.from[s] : 0;
    const start = g.spanValues === null ? stretchStart : Math.max(stretchStart, e - (g.spanValues + g.w - 1));
    const len = e - start;
    // a check starts while any budget is left, so the bound is exceeded by at most one check
    if (!(left > 0)) return 'over-budget';
    if (len < g.w + 2) return { p: null, passed: false };
    // The surrogates share the prefix's observed mask and unjudged windows, as the live analysis's do.
    const part = qualityPart(options.quality ?? null, start, e + g.offset);
    let observed: Uint8Array | null = null;
    let skip: Uint8Array | null = null;
    if (part !== null) {
      const o = part.observed;
      observed = g.offset === 0 ? o : Uint8Array.from({ length: len }, (_, i) => o[i] & o[i + 1]);
      const flat = part.flat.map((r) => ({ start: Math.max(0, r.start - g.offset), end: r.end - g.offset })).filter((r) => r.end > r.start);
      skip = unjudgedWindows(observed, flat, g.w, g.minCoverage).skip;
    }
    const residual = residuals.get(stretchStart)!;
    const job = prepareSurrogateJob(residual.subarray(start - stretchStart, e - stretchStart), value.subarray(g.offset + start, g.offset + e), {
      method: g.surrogateMethod,
      seed: options.seed ?? g.seed,
      w: g.w,
      dt: g.dt,
      indicators: [rule.indicator],
      // the live analysis's stride for the record available then (moment indicators ignore it)
      stride: evaluationStride(len - g.w + 1, g.maxEvaluatedWindows),
      observed,
      skip,
    });
    const answer = surrogateDecision(job, ev.tau[s], direction, g.surrogates, rule.indicator, options.decisionOnly ? rule.maxSurrogateP : null);
    left -= answer.drawn * len;
    spent += answer.drawn * len;
    return { p: answer.p, passed: answer.p !== null ? answer.p <= (rule.maxSurrogateP ?? 1) : answer.passed };
  };
  return { check, spent: () => spent };
}

/**
 * Time each judged instant stands for: the time since the previous judged instant, at most one cycle
 * (`every` points), so the warm-up before the first judged instant is never counted as judged. O(steps).
 */
export function stepSpans(ev: Evidence, g: Pick<ReplayGeometry, 'every' | 'interval'>): Float64Array {
  const cycle = g.every * g.interval;
  return Float64Array.from(ev.time, (t, s) => (s > 0 ? Math.min(cycle, t - ev.time[s - 1]) : cycle));
}
