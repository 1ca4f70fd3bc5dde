import { makeSurrogate, type SurrogateJob } from '@/lib/engine/surrogates';
import { alarmOnsets, firingStatistic, replayRecord, type ReplayGeometry, type ReplayRule } from './replay';

/** One calibration, as plain data so a worker thread can take it: the surrogate job plus the replay to run on each surrogate. */
export interface CalibrationTask {
  job: SurrogateJob;
  /** two-sided trend of the pre-transition record; each surrogate record is trend + surrogate residual */
  trend: Float64Array;
  time: Float64Array;
  rule: ReplayRule;
  geometry: ReplayGeometry;
}

export interface CalibrationChunk {
  /** largest tau threshold at which each surrogate replay fires (−Infinity: never) */
  statistic: Float64Array;
  /** alarm onsets of each surrogate replay at the rule's own threshold */
  onsets: Float64Array;
}

/**
 * Replays surrogates from..to−1 of the task exactly as the observed record is replayed (point-in-time
 * detrending, incremental indicators and Kendall tau, the rule's persistence and quiet period). The surrogate-p
 * criterion is not applied to surrogates (a test of a surrogate against its own surrogates says nothing
 * about the rule's false alarms and would cost N² replays). Each surrogate draws from its own random stream,
 * so results do not depend on how the range is split. Cost O((to − from)·n log n).
 */
export function calibrateChunk(task: CalibrationTask, from: number, to: number, onEach?: (done: number) => void): CalibrationChunk {
  const statistic = new Float64Array(to - from);
  const onsets = new Float64Array(to - from);
  const record = new Float64Array(task.trend.length);
  for (let i = from; i < to; i++) {
    const s = makeSurrogate(task.job, i);
    for (let k = 0; k < record.length; k++) record[k] = task.trend[k] + s[k];
    const { evidence } = replayRecord(record, task.time, task.rule, task.geometry);
    statistic[i - from] = firingStatistic(evidence, task.rule);
    onsets[i - from] = alarmOnsets(evidence, task.rule, task.rule.minTau).onsets.length;
    onEach?.(i - from + 1);
  }
  return { statistic, onsets };
}
