import { ANALYSIS_CAUTION } from '@/lib/engine/analyze';
import { detrend, type DetrendMethod } from '@/lib/engine/detrend';
import { orientedTau, type TrendDirection } from '@/lib/engine/direction';
import { AnalysisInputError } from '@/lib/engine/errors';
import { prepareSeries } from '@/lib/engine/prepare';
import type { TimeKind } from '@/lib/engine/time-kind';
import type { AnalysisSettings, SurrogateMethod } from '@/lib/engine/settings';
import { prepareSurrogateJob } from '@/lib/engine/surrogates';
import { fitRestoringModel, type RestoringModel } from './fold';
import { garwoodInterval } from './poisson';
import { runCalibration } from './pool';
import {
  SURROGATE_WORK_BUDGET,
  alarmOnsets,
  basePasses,
  firingStatistic,
  prefixSurrogateChecker,
  replayDirection,
  replayGeometry,
  replayStretches,
  shiftCuts,
  stepSpans,
  type Evidence,
  type RecordQuality,
  type ReplayRule,
} from './replay';

const BACKTEST_CAUTION = 'A backtest is evidence of how this rule would have behaved on past data, not a guarantee of how it will behave. ' + ANALYSIS_CAUTION;

const YEAR_MS = 365.25 * 86_400_000;
/** Stored evidence curves are thinned to at most this many instants (the statistics use every instant). */
const CURVE_POINTS = 2000;
/**
 * Default surrogate work all replicates of one calibration may spend on their surrogate-p checks, shared evenly:
 * about a minute on two cores. Unjudged instants are reported and left out of the judged time.
 */
export const CALIBRATION_WORK_BUDGET = 2 * SURROGATE_WORK_BUDGET;

export interface BacktestInput {
  time: Float64Array;
  value: Float64Array;
  intervalMs?: number;
  /** how `time` is read (default UTC milliseconds, as the product stores it) */
  timeKind?: TimeKind;
  settings: AnalysisSettings;
  rule: ReplayRule;
  /** marked tipping points: the stretch restarts at each, and alarms are scored against them */
  tippingPoints: { id?: number; at: number; note?: string }[];
  /** maintenance breaks: the stretch restarts at each, as in the live analysis, but they are no tipping points to warn of */
  breaks?: { at: number }[];
  /** points per analysis cycle: the rule is judged every this many new points (1 = each point) */
  every: number;
  /** an alarm counts as a warning of a tipping point only this long before it; null/undefined: one window */
  horizonMs?: number | null;
  /**
   * surrogates: replicates of the record before the first tipping point for the calibrated false-alarm rate; approaches: simulated
   * records of each kind (null and fold approach) for the ROC (default: as many as surrogates); budget: surrogate
   * work of the replicates' surrogate-p checks (default CALIBRATION_WORK_BUDGET)
   */
  calibration?: { surrogates: number; method: SurrogateMethod; approaches?: number; budget?: number } | null;
}

export interface TippingPointOutcome {
  id: number | null;
  at: number;
  note: string;
  /** first alarm onset in the warning stretch before the tipping point (within the horizon) */
  firstWarningAt: number | null;
  /** at most the horizon by construction */
  leadTimeMs: number | null;
  /** the rule's alarm was open at the last judged instant before the tipping point */
  openAtTippingPoint: boolean;
  /** largest threshold on tau (in the rule's direction) at which the rule would have warned within the horizon (null: at none) */
  firingTau: number | null;
  judgedSteps: number;
}

export interface AlarmRecord {
  time: number;
  tau: number;
  /** tau read in the rule's direction (what the threshold applies to) */
  orientedTau: number;
  /** Kendall p (descriptive only: it assumes independent values) */
  p: number;
  surrogateP: number | null;
  /** warning (within the horizon before a tipping point), settling (within one window after one) or false */
  kind: 'warning' | 'settling' | 'false';
  tippingPointAt: number | null;
}

export interface RocPoint {
  threshold: number;
  /** share of simulated approaches to a fold warned of within the horizon before the fold */
  hitRate: number | null;
  /** share of simulated null records with an alarm in the same stretch */
  falseAlarmRate: number;
}

/** A fitted restoring model, reported in grid steps and as lag-1 autocorrelations (φ = e^{−k}). */
export interface ModelReport {
  restoringRateStart: number;
  restoringRateEnd: number;
  phiStart: number;
  phiEnd: number;
  sigma: number;
  logLikelihood: number;
}

export interface CalibrationResult {
  method: SurrogateMethod;
  /** surrogate replicates of the record before the first tipping point */
  surrogates: number;
  /** surrogates behind each surrogate-p check (the series' setting, 99 when it runs none) */
  surrogatesPerCheck: number;
  /** points of the record before the first tipping point (the whole record if none is marked) that the replicates copy */
  points: number;
  /** share of replicates with at least one alarm, with a 95 % Wilson interval */
  falseAlarmRate: number;
  interval: [number, number];
  /** alarm onsets over all replicates per year of their judged time, with an exact Poisson (Garwood 1936) 95 % interval */
  falseAlarmsPerYear: number | null;
  falseAlarmsPerYearInterval: [number, number] | null;
  alarms: number;
  judgedYears: number;
  /** replicate instants the cost bound of the surrogate-p checks left unjudged (excluded from judged time) */
  notJudgedSteps: number;
  /** ROC over thresholds, from simulated approaches to a fold fitted to the record (Boettiger & Hastings 2012) */
  roc: RocPoint[];
  approaches: {
    replicates: number;
    horizonMs: number;
    nullModel: ModelReport;
    foldModel: ModelReport;
    /** likelihood-ratio statistic 2(ℓ_fold − ℓ_null) of the fit (descriptive) */
    likelihoodRatio: number;
  };
}

/** A point where the replayed stretch starts afresh, as the live analysis's would. */
export interface Restart {
  /** first instant of the new stretch, and its index on the prepared record */
  time: number;
  index: number;
  reason: 'tipping-point' | 'maintenance' | 'shift';
  /** first instant (and its index) judged on the new stretch's terms: a mark's own, or the first cycle whose record shows the shift */
  knownAt: number;
  knownFromIndex: number;
}

export interface BacktestResult {
  points: number;
  /** where the replayed stretch restarts: marked tipping points, maintenance breaks and detected abrupt shifts */
  restarts: Restart[];
  every: number;
  steps: number;
  geometry: { windowPoints: number; bandwidthPoints: number | null; detrend: string; spanValues: number | null; warmup: number };
  threshold: number;
  /** the way tau is read (rule direction; 'two-sided' for 'either') */
  direction: TrendDirection;
  horizonMs: number;
  tippingPoints: TippingPointOutcome[];
  alarms: AlarmRecord[];
  judged: {
    /** time covered by judged instants, years */
    years: number;
    /** instants not judged (a surrogate-p check the cost bound did not allow, or a window below the coverage floor), and their stretches */
    notJudgedSteps: number;
    notJudged: { from: number; to: number; steps: number }[];
    surrogateChecks: number;
    /** would-be alarms inside the quiet period of the previous one */
    quietSuppressed: number;
    /** of the not-judged instants, those whose newest window had fewer observed points than the coverage floor */
    belowCoverage: number;
    /** of the not-judged instants, those whose newest window lay in a flat run (a stuck sensor) */
    inFlatRun: number;
    minCoverage: number;
  };
  /** false alarms per year of judged time that could host one (outside warning stretches and one window after a tipping point) */
  falseAlarms: { count: number; exposureYears: number; perYear: number | null; interval: [number, number] | null };
  evidence: { time: number[]; tau: (number | null)[]; p: (number | null)[]; level: (number | null)[] };
  surrogateChecks: number;
  calibration: CalibrationResult | null;
  method: string;
  caution: string;
}

function finite(v: number): number | null {
  return Number.isFinite(v) ? v : null;
}

/** 95 % Wilson score interval for k successes in n trials. Source: Wilson (1927), JASA 22, 209–212. O(1). */
function wilsonInterval(k: number, n: number, z = 1.959963984540054): [number, number] {
  if (n === 0) return [0, 1];
  const p = k / n;
  const d = 1 + (z * z) / n;
  const c = (p + (z * z) / (2 * n)) / d;
  const h = (z * Math.sqrt((p * (1 - p)) / n + (z * z) / (4 * n * n))) / d;
  return [Math.max(0, c - h), Math.min(1, c + h)];
}

function thin(ev: Evidence): BacktestResult['evidence'] {
  const stride = Math.max(1, Math.ceil(ev.time.length / CURVE_POINTS));
  const out: BacktestResult['evidence'] = { time: [], tau: [], p: [], level: [] };
  for (let s = 0; s < ev.time.length; s += stride) {
    out.time.push(ev.time[s]);
    out.tau.push(finite(ev.tau[s]));
    out.p.push(finite(ev.p[s]));
    out.level.push(finite(ev.level[s]));
  }
  return out;
}

function modelReport(m: RestoringModel): ModelReport {
  return {
    restoringRateStart: m.k0,
    restoringRateEnd: m.k1,
    phiStart: Math.exp(-m.k0),
    phiEnd: Math.exp(-m.k1),
    sigma: m.sigma,
    logLikelihood: m.logLikelihood,
  };
}

/** Runs of consecutive step numbers as time stretches. O(k). */
function stretches(steps: Int32Array, time: Float64Array): { from: number; to: number; steps: number }[] {
  const out: { from: number; to: number; steps: number }[] = [];
  for (let a = 0; a < steps.length;) {
    let b = a;
    while (b + 1 < steps.length && steps[b + 1] === steps[b] + 1) b++;
    out.push({ from: time[steps[a]], to: time[steps[b]], steps: b - a + 1 });
    a = b + 1;
  }
  return out;
}

const METHOD =
  'Replay: the record is prepared as the live analysis prepares it; the window, bandwidth and span in points are fixed at what the settings give (fractions, points or ISO 8601 durations, read by the engine\u2019s own functions) for the trailing span, or the whole record when there is none; each point is detrended with the trend of the data available when it arrived (for local-linear and Gaussian detrending the fit of the record available then at its last point, so past residuals are never revised), the rolling indicator is updated in O(1) per point (an indicator computed from each window\u2019s residuals is evaluated, as live, at every s-th window counted back from the newest, s = \u2308windows/maximum evaluated windows\u2309 for the record available then, and its tau taken over those), and every cycle (every k points) the rule is judged as the live rule is: Kendall tau read in the rule\u2019s direction against the threshold, the level test, the surrogate p in the rule\u2019s direction (surrogates of the record available then), persistence and quiet period; the independence-based Kendall p is shown but is not a gate. After each marked tipping point, maintenance break and detected abrupt shift the replay starts afresh on the record since it, as the live analysis does; shifts are found by the engine\u2019s detector on the whole prepared record, and each counts from the first cycle whose record (its trailing span) shows it, at most a window and warm-up after it; a maintenance break is never scored as a tipping point. Instants whose newest window has fewer observed points than the coverage floor, lies inside a run of identical values (a stuck sensor), or whose surrogate check the cost bound did not allow, are reported as not judged. An alarm is a warning only within the horizon (default one window) before a marked tipping point; false alarms are counted per year of judged time outside warning stretches and one window after each tipping point. Calibration: surrogates of the record before the first tipping point, detrended stretch by stretch (trend added back), replayed with the full live procedure (restarting at its maintenance breaks and at shifts found in each replicate), each tested against surrogates of its own prefixes; false alarms per year of judged time with an exact Poisson (Garwood) interval. ROC: a constant-rate Ornstein\u2013Uhlenbeck (AR(1)) model and one whose restoring rate moves linearly in time (towards zero at a fold) are fitted by maximum likelihood to the detrended record before the first tipping point; replicates of each are replayed, and for each threshold the hit rate is the share of simulated approaches with an alarm within the horizon before their end, the false-alarm rate the share of null replicates with an alarm in the same stretch (after Boettiger & Hastings 2012, Proc. R. Soc. B 279, 4734).';

/**
 * Trend and residual of a record detrended stretch by stretch between the cuts (the engine's detrend on each
 * stretch, as the live analysis detrends only its stretch). Not for differencing (one point fewer per stretch).
 * O(n log n).
 */
function detrendByStretch(
  x: Float64Array,
  cuts: number[],
  method: DetrendMethod,
  opts: { bandwidthPoints: number; movingAverageWidth: number },
): { trend: Float64Array; residual: Float64Array } {
  const bounds = [0, ...[...new Set(cuts)].filter((c) => c > 0 && c < x.length).sort((a, b) => a - b), x.length];
  const trend = new Float64Array(x.length);
  const residual = new Float64Array(x.length);
  for (let b = 0; b + 1 < bounds.length; b++) {
    const d = detrend(x.subarray(bounds[b], bounds[b + 1]), method, opts);
    trend.set(d.trend, bounds[b]);
    residual.set(d.residual, bounds[b]);
  }
  return { trend, residual };
}

/**
 * Backtest of one rule on one record, with optional calibration on surrogates and an ROC from simulated
 * approaches to a fold. Progress goes 0..1 (replay, then calibration, then approaches); `signal` cancels;
 * `surrogateBudget` overrides the cost bound of the replay's surrogate-p checks (SURROGATE_WORK_BUDGET).
 * Cost O(n log n) for the replay plus its surrogate-p checks (≤ SURROGATE_WORK_BUDGET surrogate points), plus
 * O((N + 2M)·n_pre log n_pre)/cores for N surrogate and M approach replicates (their checks ≤ CALIBRATION_WORK_BUDGET).
 */
export async function runBacktest(
  input: BacktestInput,
  options: { onProgress?: (fraction: number) => void; signal?: AbortSignal; threads?: number; surrogateBudget?: number } = {},
): Promise<BacktestResult> {
  const { settings, rule } = input;
  const direction = replayDirection(rule);
  const kind = input.timeKind ?? 'utc-ms';
  // The whole record is prepared once (the span is cut per cycle, by the geometry's trailing span).
  const prepared = prepareSeries({ time: input.time, value: input.value, intervalMs: input.intervalMs, timeKind: kind }, { ...settings, span: null });
  const x = prepared.value;
  const time = prepared.time;
  const g = replayGeometry(settings, x.length, prepared.interval, Math.max(1, Math.floor(input.every)), kind);
  if (x.length - g.offset < g.w + g.warmup) {
    throw new AnalysisInputError(`the record has ${x.length} points; a replay with a ${g.w}-point window needs at least ${g.w + g.warmup + g.offset}`);
  }
  const quality: RecordQuality = { observed: prepared.observed, flat: prepared.flat };
  const marks = [...input.tippingPoints].sort((a, b) => a.at - b.at);
  const firstAtOrAfter = (at: number) => {
    let k = 0;
    while (k < time.length && time[k] < at) k++;
    return k;
  };
  // The live analysis judges only the stretch since the latest tipping point, maintenance break or detected shift:
  // each stretch is replayed on its own.
  const tippingPointCuts = marks.map((m) => firstAtOrAfter(m.at));
  const maintenanceCuts = (input.breaks ?? []).map((b) => firstAtOrAfter(b.at));
  const breakCuts = [...tippingPointCuts, ...maintenanceCuts];
  const shifts = shiftCuts(x, settings, g);
  const cuts = [...breakCuts, ...shifts];
  // where the replayed stretch restarts, and why (a mark names the reason before a shift at the same point, as in the engine)
  const restartAt = new Map<number, { reason: Restart['reason']; knownFrom: number }>();
  for (const c of shifts) if (c.index > 0) restartAt.set(c.index, { reason: 'shift', knownFrom: c.knownFrom });
  for (const [list, reason] of [
    [maintenanceCuts, 'maintenance'],
    [tippingPointCuts, 'tipping-point'],
  ] as const) {
    for (const c of list) if (c > 0 && c < x.length) restartAt.set(c, { reason, knownFrom: c });
  }
  const restarts: Restart[] = [...restartAt]
    .sort((a, b) => a[0] - b[0])
    .map(([index, r]) => ({ time: time[index], index, reason: r.reason, knownAt: time[r.knownFrom], knownFromIndex: r.knownFrom }));
  const { residuals, evidence: ev } = replayStretches(x, time, rule, g, quality, cuts);
  // Draws stop once a check is sure to fail: a passing check (the only kind an alarm shows) still has its exact p.
  const checker = prefixSurrogateChecker(residuals, x, ev, rule, g, { budget: options.surrogateBudget, decisionOnly: true, quality });
  const report = alarmOnsets(ev, rule, rule.minTau, checker.check);
  const { onsets } = report;
  options.onProgress?.(input.calibration ? 0.1 : 1);

  const settle = g.w * g.interval;
  const horizon = input.horizonMs ?? g.w * g.interval;
  /** the warning stretch of tipping point j: [start_j, at_j) */
  const stretchStart = marks.map((m, j) => Math.max(j > 0 ? marks[j - 1].at + settle : Number.NEGATIVE_INFINITY, m.at - horizon));
  const classify = (t: number): { kind: AlarmRecord['kind']; j: number } => {
    for (let j = 0; j < marks.length; j++) {
      if (t >= stretchStart[j] && t < marks[j].at) return { kind: 'warning', j };
      if (t >= marks[j].at && t < marks[j].at + settle) return { kind: 'settling', j };
    }
    return { kind: 'false', j: -1 };
  };

  const alarms: AlarmRecord[] = onsets.map((o) => {
    const c = classify(o.time);
    return {
      time: o.time,
      tau: o.tau,
      orientedTau: orientedTau(o.tau, direction),
      p: o.p,
      surrogateP: o.surrogateP,
      kind: c.kind,
      tippingPointAt: c.j >= 0 ? marks[c.j].at : null,
    };
  });

  const spans = stepSpans(ev, g);
  const unjudged = new Uint8Array(ev.time.length);
  for (const s of report.notJudged) unjudged[s] = 1;
  let judgedMs = 0;
  let exposureMs = 0;
  for (let s = 0; s < ev.time.length; s++) {
    if (unjudged[s]) continue;
    judgedMs += spans[s];
    if (classify(ev.time[s]).kind === 'false') exposureMs += spans[s];
  }
  const falseCount = alarms.filter((a) => a.kind === 'false').length;
  const exposureYears = exposureMs / YEAR_MS;

  const tippingPoints: TippingPointOutcome[] = marks.map((m, j) => {
    let from = 0;
    while (from < ev.time.length && ev.time[from] < stretchStart[j]) from++;
    let to = from;
    while (to < ev.time.length && ev.time[to] < m.at) to++;
    const first = alarms.find((a) => a.kind === 'warning' && a.tippingPointAt === m.at);
    let open = false;
    if (to > 0 && to - 1 >= from) {
      // open at the last instant before the tipping point ⇔ the latest onset is not followed by a failing step
      let s = to - 1;
      while (s >= 0 && basePasses(ev, s, rule, rule.minTau, direction)) s--;
      open = onsets.some((o) => o.step > s && o.step < to);
    }
    const stat = to > from ? firingStatistic(ev, rule, from, to) : Number.NEGATIVE_INFINITY;
    return {
      id: m.id ?? null,
      at: m.at,
      note: m.note ?? '',
      firstWarningAt: first?.time ?? null,
      leadTimeMs: first ? m.at - first.time : null,
      openAtTippingPoint: open,
      firingTau: finite(stat),
      judgedSteps: to - from,
    };
  });

  let calibration: CalibrationResult | null = null;
  if (input.calibration && input.calibration.surrogates > 0) {
    let nPre = x.length;
    if (marks.length > 0) {
      nPre = 0;
      while (nPre < x.length && time[nPre] < marks[0].at) nPre++;
    }
    if (nPre - g.offset < g.w + g.warmup) {
      throw new AnalysisInputError(`only ${nPre} points precede the first tipping point; calibration needs at least ${g.w + g.warmup + g.offset}`);
    }
    const pre = x.slice(0, nPre);
    const preTime = time.slice(0, nPre);
    // Maintenance breaks and shifts inside the record before the first tipping point: detrended stretch by stretch, so a jump
    // stays in the trend the replicates share and never inflates the residual their surrogates copy.
    const preBreaks = breakCuts.filter((c) => c > 0 && c < nPre);
    const d = detrendByStretch(
      pre,
      [...preBreaks, ...shifts.map((c) => c.index).filter((c) => c < nPre)],
      settings.detrend === 'difference' ? 'none' : settings.detrend,
      {
        bandwidthPoints: g.h,
        movingAverageWidth: g.movingAverageWidth,
      },
    );
    const method = input.calibration.method;
    const job = prepareSurrogateJob(d.residual, pre, { method, seed: settings.seed, w: g.w, dt: g.dt, indicators: [rule.indicator] });
    job.rawMean = null;
    const N = input.calibration.surrogates;
    const M = input.calibration.approaches ?? N;
    const threads = options.threads;
    const base = {
      trend: d.trend,
      time: preTime,
      quality: {
        observed: prepared.observed.slice(0, nPre),
        flat: prepared.flat.map((r) => ({ start: r.start, end: Math.min(r.end, nPre) })).filter((r) => r.start < r.end),
      },
      breaks: preBreaks,
      shiftDetection: settings.shiftDetection,
      rule,
      geometry: g,
    };
    const surrogateRuns = await runCalibration(
      {
        ...base,
        source: { kind: 'surrogate', job },
        scoreFrom: Number.NEGATIVE_INFINITY,
        liveSurrogateP: true,
        budget: (input.calibration.budget ?? CALIBRATION_WORK_BUDGET) / N,
      },
      N,
      { threads, signal: options.signal, onProgress: (f) => options.onProgress?.(0.1 + 0.6 * f) },
    );
    const fired = surrogateRuns.onsets.reduce((a, c) => a + (c > 0 ? 1 : 0), 0);
    const alarmsTotal = surrogateRuns.onsets.reduce((a, c) => a + c, 0);
    const judgedYears = surrogateRuns.judgedMs.reduce((a, c) => a + c, 0) / YEAR_MS;

    // ROC from simulated approaches: the replicates end where the record's first tipping point is (or its end)
    const end = marks.length > 0 ? marks[0].at : preTime[nPre - 1] + g.interval;
    const nullModel = fitRestoringModel(d.residual, { constant: true });
    const foldModel = fitRestoringModel(d.residual);
    const approach = (model: RestoringModel, seed: number, from: number, to: number) =>
      runCalibration({ ...base, source: { kind: 'restoring', model, seed }, scoreFrom: end - horizon, liveSurrogateP: false, budget: 0 }, M, {
        threads,
        signal: options.signal,
        onProgress: (f) => options.onProgress?.(from + (to - from) * f),
      });
    // distinct seeds for the two kinds, so null and fold replicates share no random numbers
    const nullRuns = await approach(nullModel, settings.seed * 2 + 1, 0.7, 0.85);
    const foldRuns = await approach(foldModel, settings.seed * 2 + 2, 0.85, 1);
    const thresholds = new Set<number>([rule.minTau]);
    for (let k = -20; k <= 20; k++) thresholds.add(Math.round(k * 5) / 100);
    const share = (stats: Float64Array, threshold: number) => stats.reduce((a, s) => a + (s >= threshold ? 1 : 0), 0) / stats.length;
    const roc = [...thresholds]
      .sort((a, b) => a - b)
      .map((threshold) => ({ threshold, hitRate: share(foldRuns.statistic, threshold), falseAlarmRate: share(nullRuns.statistic, threshold) }));
    calibration = {
      method,
      surrogates: N,
      surrogatesPerCheck: g.surrogates,
      points: nPre,
      falseAlarmRate: fired / N,
      interval: wilsonInterval(fired, N),
      falseAlarmsPerYear: judgedYears > 0 ? alarmsTotal / judgedYears : null,
      falseAlarmsPerYearInterval: garwoodInterval(alarmsTotal, judgedYears),
      alarms: alarmsTotal,
      judgedYears,
      notJudgedSteps: surrogateRuns.notJudged.reduce((a, c) => a + c, 0),
      roc,
      approaches: {
        replicates: M,
        horizonMs: horizon,
        nullModel: modelReport(nullModel),
        foldModel: modelReport(foldModel),
        likelihoodRatio: 2 * (foldModel.logLikelihood - nullModel.logLikelihood),
      },
    };
  }
  options.onProgress?.(1);

  return {
    points: x.length,
    restarts,
    every: g.every,
    steps: ev.time.length,
    geometry: {
      windowPoints: g.w,
      bandwidthPoints: settings.detrend === 'gaussian' || settings.detrend === 'local-linear' ? g.h : null,
      detrend: settings.detrend,
      spanValues: g.spanValues,
      warmup: g.warmup,
    },
    threshold: rule.minTau,
    direction,
    horizonMs: horizon,
    tippingPoints,
    alarms,
    judged: {
      years: judgedMs / YEAR_MS,
      notJudgedSteps: report.notJudged.length,
      notJudged: stretches(report.notJudged, ev.time),
      surrogateChecks: report.surrogateChecks,
      quietSuppressed: report.quietSuppressed,
      belowCoverage: report.belowCoverage,
      inFlatRun: report.inFlatRun,
      minCoverage: g.minCoverage,
    },
    falseAlarms: {
      count: falseCount,
      exposureYears,
      perYear: exposureYears > 0 ? falseCount / exposureYears : null,
      interval: garwoodInterval(falseCount, exposureYears),
    },
    evidence: thin(ev),
    surrogateChecks: report.surrogateChecks,
    calibration,
    method: METHOD,
    caution: BACKTEST_CAUTION,
  };
}
