import { surrogateTaus, type SurrogateJob } from './surrogates';
import { runRanges } from './worker-pool';

/** Below this many surrogates per thread, starting a worker (≈0.4 s under tsx) costs more than it saves. */
const MIN_PER_WORKER = 50;

/**
 * Kendall taus of surrogates 0..count−1 for every indicator of the job. With `parallel` (default) the
 * index range is cut into contiguous chunks, one per core, each run by a worker thread (`runRanges`, on
 * surrogate-worker.mjs beside this module: from source, or the command line's bundle in dist/); since each
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
  const { parts, bounds, workers } = await runRanges({
    task: job,
    count,
    worker: () => new URL('./surrogate-worker.mjs', import.meta.url),
    minPerWorker: MIN_PER_WORKER,
    threads: options.threads,
    parallel: options.parallel,
    inline: (from, to) => surrogateTaus(job, from, to),
  });
  const out: Record<string, Float64Array> = {};
  for (const name of job.indicators) {
    const all = new Float64Array(count);
    parts.forEach((part, i) => all.set(part[name], bounds[i]));
    out[name] = all;
  }
  return { taus: out, workers };
}
