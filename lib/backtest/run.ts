import { ANALYSIS_CAUTION } from '@/lib/engine/analyze';
import { detrend } from '@/lib/engine/detrend';
import { AnalysisInputError } from '@/lib/engine/errors';
import { prepareSeries } from '@/lib/engine/prepare';
import type { AnalysisSettings, SurrogateMethod } from '@/lib/engine/settings';
import { prepareSurrogateJob } from '@/lib/engine/surrogates';
import { runCalibration } from './pool';
import { alarmOnsets, firingStatistic, otherCriteriaHold, prefixSurrogateP, replayGeometry, replayRecord, type Evidence, type ReplayRule } from './replay';

export const BACKTEST_CAUTION =
  'A backtest is evidence of how this rule would have behaved on past data, not a guarantee of how it will behave. ' + ANALYSIS_CAUTION;

const YEAR_MS = 365.25 * 86_400_000;
/** Stored evidence curves are thinned to at most this many instants (the statistics use every instant). */
const CURVE_POINTS = 2000;

export interface BacktestInput {
  time: Float64Array;
  value: Float64Array;
  intervalMs?: number;
  settings: AnalysisSettings;
  rule: ReplayRule;
  transitions: { id?: number; at: number; note?: string }[];
  /** judge every k new points (1 = each point) */
  every: number;
  /** an alarm counts as a warning of a transition only this long before it (null: anywhere since the previous one) */
  horizonMs?: number | null;
  calibration?: { surrogates: number; method: SurrogateMethod } | null;
}

export interface TransitionOutcome {
  id: number | null;
  at: number;
  note: string;
  /** first alarm onset in the warning stretch before the transition */
  firstWarningAt: number | null;
  leadTimeMs: number | null;
  /** the rule's alarm was open at the last judged instant before the transition */
  openAtTransition: boolean;
  /** largest tau threshold at which the rule would have warned (null: at none) */
  firingTau: number | null;
  judgedSteps: number;
}

export interface AlarmRecord {
  time: number;
  tau: number;
  p: number;
  surrogateP: number | null;
  /** warning (before a transition), settling (within one window after one) or false (no transition near) */
  kind: 'warning' | 'settling' | 'false';
  transitionAt: number | null;
}

export interface RocPoint {
  threshold: number;
  hitRate: number | null;
  falseAlarmRate: number;
}

export interface CalibrationResult {
  method: SurrogateMethod;
  surrogates: number;
  /** points of the record before the first transition (the whole record if none is marked) that the surrogates copy */
  points: number;
  /** share of surrogate replays with at least one alarm at the rule's threshold, with a 95 % Wilson interval */
  falseAlarmRate: number;
  interval: [number, number];
  falseAlarmsPerYear: number | null;
  roc: RocPoint[];
}

export interface BacktestResult {
  points: number;
  every: number;
  steps: number;
  geometry: { windowPoints: number; bandwidthPoints: number | null; detrend: string; spanValues: number | null; warmup: number };
  threshold: number;
  transitions: TransitionOutcome[];
  alarms: AlarmRecord[];
  falseAlarms: { count: number; exposureYears: number; perYear: number | null };
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
export function wilsonInterval(k: number, n: number, z = 1.959963984540054): [number, number] {
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

const METHOD =
  'Replay: the record is prepared as the live analysis prepares it; the window and bandwidth in points are fixed at what the settings give for the whole record (or its trailing span); each point is detrended with the trend of the data available when it arrived (so past residuals are never revised), the rolling indicator is updated in O(1) per point and the Kendall tau of the indicator values available is judged every k points against the rule (tau threshold, Kendall p, level, persistence, quiet period; the surrogate p at would-be alarm onsets). Calibration: surrogates of the detrended pre-transition record (trend added back) replayed the same way; the ROC pairs, for each tau threshold, the share of marked transitions warned of with the share of surrogate replays that raise any alarm.';

/**
 * Backtest of one rule on one record, with optional calibration on surrogates. Progress goes 0..1 (the replay
 * is the first tenth when a calibration follows); `signal` cancels. Cost O(n log n) for the replay plus
 * O(N·n_pre log n_pre)/cores for N surrogates, plus O(N_s·n log n) per surrogate-p check.
 */
export async function runBacktest(
  input: BacktestInput,
  options: { onProgress?: (fraction: number) => void; signal?: AbortSignal; threads?: number } = {},
): Promise<BacktestResult> {
  const { settings, rule } = input;
  const prepared = prepareSeries({ time: input.time, value: input.value, intervalMs: input.intervalMs }, { ...settings, spanPoints: null });
  const x = prepared.value;
  const time = prepared.time;
  const nRef = settings.spanPoints === null ? x.length : Math.min(settings.spanPoints, x.length);
  const g = replayGeometry(settings, nRef, prepared.interval, Math.max(1, Math.floor(input.every)));
  if (x.length - g.offset < g.w + g.warmup) {
    throw new AnalysisInputError(`the record has ${x.length} points; a replay with a ${g.w}-point window needs at least ${g.w + g.warmup + g.offset}`);
  }
  const { residual, evidence: ev } = replayRecord(x, time, rule, g);
  const { onsets, surrogateChecks } = alarmOnsets(ev, rule, rule.minTau, (s) => prefixSurrogateP(residual, x, ev.index[s], ev.tau[s], rule, g));
  options.onProgress?.(input.calibration ? 0.1 : 1);

  const settle = g.w * g.interval;
  const horizon = input.horizonMs ?? Number.POSITIVE_INFINITY;
  const marks = [...input.transitions].sort((a, b) => a.at - b.at);
  /** the warning stretch of transition j: [start_j, at_j) */
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
    return { time: o.time, tau: o.tau, p: o.p, surrogateP: o.surrogateP, kind: c.kind, transitionAt: c.j >= 0 ? marks[c.j].at : null };
  });

  let exposureMs = 0;
  for (let s = 0; s < ev.time.length; s++) {
    if (classify(ev.time[s]).kind !== 'false') continue;
    exposureMs += s > 0 ? ev.time[s] - ev.time[s - 1] : g.every * g.interval;
  }
  const falseCount = alarms.filter((a) => a.kind === 'false').length;
  const exposureYears = exposureMs / YEAR_MS;

  const transitions: TransitionOutcome[] = marks.map((m, j) => {
    let from = 0;
    while (from < ev.time.length && ev.time[from] < stretchStart[j]) from++;
    let to = from;
    while (to < ev.time.length && ev.time[to] < m.at) to++;
    const first = alarms.find((a) => a.kind === 'warning' && a.transitionAt === m.at);
    let open = false;
    if (to > 0 && to - 1 >= from) {
      // open at the last instant before the transition ⇔ the latest onset is not followed by a failing step
      let s = to - 1;
      let run = 0;
      while (s >= 0 && ev.tau[s] >= rule.minTau && otherCriteriaHold(ev, s, rule)) {
        run++;
        s--;
      }
      open = run >= rule.persistence && onsets.some((o) => o.step > s && o.step < to);
    }
    const stat = to > from ? firingStatistic(ev, rule, from, to) : Number.NEGATIVE_INFINITY;
    return {
      id: m.id ?? null,
      at: m.at,
      note: m.note ?? '',
      firstWarningAt: first?.time ?? null,
      leadTimeMs: first ? m.at - first.time : null,
      openAtTransition: open,
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
      throw new AnalysisInputError(`only ${nPre} points precede the first transition; calibration needs at least ${g.w + g.warmup + g.offset}`);
    }
    const pre = x.slice(0, nPre);
    const d = detrend(pre, settings.detrend === 'difference' ? 'none' : settings.detrend, { bandwidthPoints: g.h, movingAverageWidth: g.movingAverageWidth });
    const method = input.calibration.method;
    const job = prepareSurrogateJob(d.residual, pre, { method, seed: settings.seed, w: g.w, dt: g.dt, indicators: [rule.indicator] });
    job.rawMean = null;
    const N = input.calibration.surrogates;
    const chunk = await runCalibration(
      { job, trend: d.trend, time: time.slice(0, nPre), rule, geometry: g },
      N,
      { threads: options.threads, signal: options.signal, onProgress: (f) => options.onProgress?.(0.1 + 0.9 * f) },
    );
    const fired = chunk.onsets.reduce((a, c) => a + (c > 0 ? 1 : 0), 0);
    const years = ((nPre - 1) * g.interval) / YEAR_MS;
    const thresholds = new Set<number>([rule.minTau]);
    for (let k = -20; k <= 20; k++) thresholds.add(Math.round(k * 5) / 100);
    const hits = transitions.map((t) => t.firingTau ?? Number.NEGATIVE_INFINITY);
    const roc = [...thresholds]
      .sort((a, b) => a - b)
      .map((threshold) => ({
        threshold,
        hitRate: hits.length ? hits.filter((s) => s >= threshold).length / hits.length : null,
        falseAlarmRate: chunk.statistic.reduce((a, s) => a + (s >= threshold ? 1 : 0), 0) / N,
      }));
    calibration = {
      method,
      surrogates: N,
      points: nPre,
      falseAlarmRate: fired / N,
      interval: wilsonInterval(fired, N),
      falseAlarmsPerYear: years > 0 ? chunk.onsets.reduce((a, c) => a + c, 0) / N / years : null,
      roc,
    };
  }
  options.onProgress?.(1);

  return {
    points: x.length,
    every: g.every,
    steps: ev.time.length,
    geometry: {
      windowPoints: g.w,
      bandwidthPoints: settings.detrend === 'gaussian' ? g.h : null,
      detrend: settings.detrend,
      spanValues: g.spanValues,
      warmup: g.warmup,
    },
    threshold: rule.minTau,
    transitions,
    alarms,
    falseAlarms: { count: falseCount, exposureYears, perYear: exposureYears > 0 ? falseCount / exposureYears : null },
    evidence: thin(ev),
    surrogateChecks,
    calibration,
    method: METHOD,
    caution: BACKTEST_CAUTION,
  };
}
