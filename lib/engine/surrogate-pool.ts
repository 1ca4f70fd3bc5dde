import os from 'node:os';
import { surrogateTaus, type SurrogateJob } from './surrogates';

/** Below this many surrogates per thread, starting a worker (≈0.4 s under tsx) costs more than it saves. */
const MIN_PER_WORKER = 50;

/** Module loaded by each worker; a plain .mjs file that registers tsx and imports surrogates.ts. */
const WORKER_FILE = 'surrogate-worker.mjs';

function workerUrl(): URL | null {
  try {
    return new URL(`./${WORKER_FILE}`, import.meta.url);
  } catch {
    return null;
  }
}

function runInWorker(url: URL, job: SurrogateJob, from: number, to: number): Promise<Record<string, Float64Array>> {
  return import('node:worker_threads').then(
    ({ Worker }) =>
      new Promise((resolve, reject) => {
        const worker = new Worker(url, { workerData: { job, from, to } });
        worker.once('message', (m: Record<string, Float64Array>) => {
          resolve(m);
          void worker.terminate();
        });
        worker.once('error', reject);
        worker.once('exit', (code) => {
          if (code !== 0) reject(new Error(`surrogate worker exited with code ${code}`));
        });
      }),
  );
}

/**
 * Kendall taus of surrogates 0..count−1 for every indicator of the job. With `parallel` (default) the
 * index range is cut into contiguous chunks, one per core, each run by a worker thread; since each
 * surrogate draws from its own stream (seed, index), the numbers are identical to the synchronous
 * path, which is used when workers are unavailable (e.g. inside the Next.js server bundle, where the
 * worker file is not shipped) or fail to start. `workers` says how many chunks worker threads computed.
 * Cost O(count · n log n) / cores. Common practice (static block partition of independent tasks).
 */
export async function computeSurrogateTaus(
  job: SurrogateJob,
  count: number,
  options: { parallel?: boolean; threads?: number } = {},
): Promise<{ taus: Record<string, Float64Array>; workers: number }> {
  const cores = options.threads ?? (typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length);
  const threads = Math.max(1, Math.min(cores, Math.floor(count / MIN_PER_WORKER)));
  const url = workerUrl();
  const useWorkers = options.parallel !== false && threads > 1 && url !== null && url.protocol === 'file:' && !process.env.NEXT_RUNTIME;
  if (!useWorkers) return { taus: surrogateTaus(job, 0, count), workers: 0 };
  let workers = 0;
  const bounds = Array.from({ length: threads + 1 }, (_, i) => Math.round((i * count) / threads));
  const parts = await Promise.all(
    bounds.slice(0, -1).map((from, i) =>
      runInWorker(url, job, from, bounds[i + 1]).then(
        (part) => {
          workers++;
          return part;
        },
        () => surrogateTaus(job, from, bounds[i + 1]),
      ),
    ),
  );
  const out: Record<string, Float64Array> = {};
  for (const name of job.indicators) {
    const all = new Float64Array(count);
    parts.forEach((part, i) => all.set(part[name], bounds[i]));
    out[name] = all;
  }
  return { taus: out, workers };
}
