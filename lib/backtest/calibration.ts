import { makeSurrogate, type SurrogateJob } from '@/lib/engine/surrogates';
import { simulateRestoring, type RestoringModel } from './fold';
import type { AnalysisSettings } from '@/lib/engine/settings';
import {
  alarmOnsets,
  firingStatistic,
  prefixSurrogateChecker,
  replayStretches,
  shiftCuts,
  stepSpans,
  type RecordQuality,
  type ReplayGeometry,
  type ReplayRule,
} from './replay';

/** Where the residual of each replicate comes from: a surrogate of the record, or a fitted restoring model. */
export type ReplicateSource = { kind: 'surrogate'; job: SurrogateJob } | { kind: 'restoring'; model: RestoringModel; seed: number };

/** One batch of simulated records, as plain data so a worker thread can take it. */
export interface CalibrationTask {
  source: ReplicateSource;
  /** two-sided trend of the record before the first tipping point; each replicate record is trend + simulated residual */
  trend: Float64Array;
  time: Float64Array;
  /** observed mask and flat runs of the record copied, so replicates are judged on the same windows */
  quality: RecordQuality | null;
  /** maintenance breaks in the record copied (record indices): each replicate's stretch restarts there */
  breaks: number[];
  /** whether each replicate is searched for abrupt shifts (and restarts after them) as the live analysis would */
  shiftDetection: AnalysisSettings['shiftDetection'];
  rule: ReplayRule;
  geometry: ReplayGeometry;
  /** the firing statistic judges the instants at or after this time (the warning horizon before the end) */
  scoreFrom: number;
  /** judge the rule's surrogate-p criterion on each replicate, as the live rule does (false: tau and level only) */
  liveSurrogateP: boolean;
  /** cost bound of those checks per replicate, in surrogate points (see prefixSurrogateChecker) */
  budget: number;
}

export interface CalibrationChunk {
  /** largest threshold (tau in the rule's direction) at which each replicate fires within the scored stretch (−Infinity: never) */
  statistic: Float64Array;
  /** alarm onsets of each replicate at the rule's own threshold, over the whole replicate */
  onsets: Float64Array;
  /** judged time of each replicate, ms */
  judgedMs: Float64Array;
  /** instants of each replicate that the cost bound left unjudged */
  notJudged: Float64Array;
}

export const CHUNK_FIELDS = ['statistic', 'onsets', 'judgedMs', 'notJudged'] as const;

/**
 * Replays replicates from..to−1 of the task exactly as the observed record is replayed (stretches restarting at
 * maintenance breaks and at shifts found in the replicate, point-in-time detrending, windows judged as the
 * record's, incremental indicators and Kendall tau, the rule's direction, persistence and quiet period; with
 * liveSurrogateP the surrogate-p criterion too, each replicate tested against surrogates of its own prefixes,
 * drawn only until the decision is known). Replicate i draws from its own random stream, so results do not
 * depend on how the range is split. Cost O((to − from)·n log n), plus the surrogate checks (bounded by `budget`).
 */
export function calibrateChunk(task: CalibrationTask, from: number, to: number, onEach?: (done: number) => void): CalibrationChunk {
  const out: CalibrationChunk = {
    statistic: new Float64Array(to - from),
    onsets: new Float64Array(to - from),
    judgedMs: new Float64Array(to - from),
    notJudged: new Float64Array(to - from),
  };
  const g = task.geometry;
  const record = new Float64Array(task.trend.length);
  for (let i = from; i < to; i++) {
    const r = task.source.kind === 'surrogate' ? makeSurrogate(task.source.job, i) : simulateRestoring(task.source.model, task.source.seed, i);
    for (let k = 0; k < record.length; k++) record[k] = task.trend[k] + r[k];
    const { residuals, evidence } = replayStretches(record, task.time, task.rule, g, task.quality, [...task.breaks, ...shiftCuts(record, task, g)]);
    let first = 0;
    while (first < evidence.time.length && evidence.time[first] < task.scoreFrom) first++;
    out.statistic[i - from] = firingStatistic(evidence, task.rule, first);
    const checker =
      task.liveSurrogateP && task.rule.maxSurrogateP !== null
        ? prefixSurrogateChecker(residuals, record, evidence, task.rule, g, {
            budget: task.budget,
            decisionOnly: true,
            seed: g.seed + (i + 1) * 104_729,
            quality: task.quality,
          })
        : null;
    const report = alarmOnsets(evidence, task.rule, task.rule.minTau, checker?.check ?? (() => ({ p: null, passed: true })));
    const spans = stepSpans(evidence, g);
    let judged = 0;
    for (const v of spans) judged += v;
    for (const s of report.notJudged) judged -= spans[s];
    out.onsets[i - from] = report.onsets.length;
    out.judgedMs[i - from] = judged;
    out.notJudged[i - from] = report.notJudged.length;
    onEach?.(i - from + 1);
  }
  return out;
}
