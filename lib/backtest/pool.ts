import { CancelledError, runRanges } from '@/lib/engine/worker-pool';
import { CHUNK_FIELDS, calibrateChunk, type CalibrationChunk, type CalibrationTask } from './calibration';

export { CancelledError };

/** Below this many surrogates per thread, a worker's start-up (≈0.4 s under tsx) costs more than it saves. */
const MIN_PER_WORKER = 20;

function emptyChunk(n: number): CalibrationChunk {
  return { statistic: new Float64Array(n), onsets: new Float64Array(n), judgedMs: new Float64Array(n), notJudged: new Float64Array(n) };
}

/** Same work on this thread, yielding between surrogates so progress is reported and cancellation is seen. */
async function inline(task: CalibrationTask, from: number, to: number, onDone: (done: number) => void, signal?: AbortSignal): Promise<CalibrationChunk> {
  const out = emptyChunk(to - from);
  for (let i = from; i < to; i++) {
    if (signal?.aborted) throw new CancelledError();
    const one = calibrateChunk(task, i, i + 1);
    for (const f of CHUNK_FIELDS) out[f][i - from] = one[f][0];
    onDone(i - from + 1);
    if ((i - from) % 5 === 4) await new Promise((r) => setImmediate(r));
  }
  return out;
}

/**
 * Replays replicates 0..count−1 of a calibration task (surrogates of the record, or simulated approaches) on all
 * cores through the engine's worker pool (`runRanges`: one contiguous chunk per core, each on a
 * calibration-worker.mjs thread); numbers are identical to the single-thread path, used when workers are
 * unavailable (inside the Next.js server bundle) or fail to start. `onProgress` gets the fraction done; `signal`
 * stops the workers (CancelledError). Cost O(count · n log n) / cores.
 */
export async function runCalibration(
  task: CalibrationTask,
  count: number,
  options: { threads?: number; onProgress?: (fraction: number) => void; signal?: AbortSignal } = {},
): Promise<CalibrationChunk> {
  const { parts, bounds } = await runRanges({
    task,
    count,
    worker: () => new URL('./calibration-worker.mjs', import.meta.url),
    minPerWorker: MIN_PER_WORKER,
    threads: options.threads,
    inline: (from, to, onDone, signal) => inline(task, from, to, onDone, signal),
    onProgress: options.onProgress,
    signal: options.signal,
  });
  const out = emptyChunk(count);
  parts.forEach((c, i) => {
    for (const f of CHUNK_FIELDS) out[f].set(c[f], bounds[i]);
  });
  return out;
}
