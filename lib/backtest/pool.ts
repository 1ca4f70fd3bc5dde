import os from 'node:os';
import { CHUNK_FIELDS, calibrateChunk, type CalibrationChunk, type CalibrationTask } from './calibration';

/** Raised when a caller's AbortSignal stops a calibration. */
export class CancelledError extends Error {
  constructor() {
    super('cancelled');
    this.name = 'CancelledError';
  }
}

/** Below this many surrogates per thread, a worker's start-up (≈0.4 s under tsx) costs more than it saves. */
const MIN_PER_WORKER = 20;

function workerUrl(): URL | null {
  try {
    return new URL('./calibration-worker.mjs', import.meta.url);
  } catch {
    return null;
  }
}

type Progress = (done: number) => void;

function emptyChunk(n: number): CalibrationChunk {
  return { statistic: new Float64Array(n), onsets: new Float64Array(n), judgedMs: new Float64Array(n), notJudged: new Float64Array(n) };
}

async function inWorker(url: URL, task: CalibrationTask, from: number, to: number, onDone: Progress, signal?: AbortSignal): Promise<CalibrationChunk> {
  const { Worker } = await import('node:worker_threads');
  return new Promise((resolve, reject) => {
    const worker = new Worker(url, { workerData: { task, from, to } });
    const abort = () => {
      void worker.terminate();
      reject(new CancelledError());
    };
    signal?.addEventListener('abort', abort, { once: true });
    worker.on('message', (m: { progress?: number; result?: CalibrationChunk }) => {
      if (m.progress !== undefined) onDone(m.progress);
      if (m.result) {
        signal?.removeEventListener('abort', abort);
        onDone(to - from);
        resolve(m.result);
        void worker.terminate();
      }
    });
    worker.once('error', reject);
    worker.once('exit', (code) => {
      if (code !== 0 && !signal?.aborted) reject(new Error(`calibration worker exited with code ${code}`));
    });
  });
}

/** Same work on this thread, yielding between surrogates so progress is reported and cancellation is seen. */
async function inline(task: CalibrationTask, from: number, to: number, onDone: Progress, signal?: AbortSignal): Promise<CalibrationChunk> {
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
 * Replays replicates 0..count−1 of a calibration task (surrogates of the record, or simulated approaches) on all cores: the index range is cut into one contiguous
 * chunk per core, each run by a worker thread (the engine's pool pattern, lib/engine/surrogate-pool.ts);
 * numbers are identical to the single-thread path, used when workers are unavailable (inside the Next.js
 * server bundle) or fail to start. `onProgress` gets the fraction done; `signal` stops the workers
 * (CancelledError). Cost O(count · n log n) / cores.
 */
export async function runCalibration(
  task: CalibrationTask,
  count: number,
  options: { threads?: number; onProgress?: (fraction: number) => void; signal?: AbortSignal } = {},
): Promise<CalibrationChunk> {
  const cores = options.threads ?? (typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length);
  const threads = Math.max(1, Math.min(cores, Math.floor(count / MIN_PER_WORKER)));
  const url = workerUrl();
  const useWorkers = threads > 1 && url !== null && url.protocol === 'file:' && !process.env.NEXT_RUNTIME;
  const parts = useWorkers ? threads : 1;
  const bounds = Array.from({ length: parts + 1 }, (_, i) => Math.round((i * count) / parts));
  const done = new Array<number>(parts).fill(0);
  const report = (i: number) => (k: number) => {
    done[i] = k;
    options.onProgress?.(done.reduce((a, b) => a + b, 0) / Math.max(1, count));
  };
  const chunks = await Promise.all(
    bounds.slice(0, -1).map((from, i) =>
      useWorkers
        ? inWorker(url!, task, from, bounds[i + 1], report(i), options.signal).catch((error) => {
            if (error instanceof CancelledError) throw error;
            return inline(task, from, bounds[i + 1], report(i), options.signal);
          })
        : inline(task, from, bounds[i + 1], report(i), options.signal),
    ),
  );
  const out = emptyChunk(count);
  chunks.forEach((c, i) => {
    for (const f of CHUNK_FIELDS) out[f].set(c[f], bounds[i]);
  });
  return out;
}
