import os from 'node:os';

/** Raised when a caller's AbortSignal stops the work of a pool. */
export class CancelledError extends Error {
  constructor() {
    super('cancelled');
    this.name = 'CancelledError';
  }
}

/** What a worker thread posts back: progress within its range (items done), then its result once. */
export interface RangeMessage<T> {
  progress?: number;
  result?: T;
}

/** The data every pool worker receives: the task and its index range [from, to). */
export interface RangeData<Task> {
  task: Task;
  from: number;
  to: number;
}

export interface RangePoolOptions<Task, T> {
  task: Task;
  /** Indices 0..count−1 to compute. */
  count: number;
  /** The worker module; null, or not a file: URL (inside the Next.js server bundle, where it is not shipped), means inline. */
  worker: () => URL | null;
  /** Below this many items per thread, starting a thread costs more than it saves. */
  minPerWorker: number;
  /** Threads wanted (default: the cores available). */
  threads?: number;
  /** false: compute inline on this thread. */
  parallel?: boolean;
  /** The same computation on this thread, for a range: the fallback when workers are unavailable or fail. */
  inline: (from: number, to: number, onDone: (done: number) => void, signal?: AbortSignal) => T | Promise<T>;
  /** Fraction of the items done, over all ranges. */
  onProgress?: (fraction: number) => void;
  /** Stops the workers; the pool then rejects with CancelledError. */
  signal?: AbortSignal;
}

/**
 * Cuts indices 0..count−1 into contiguous ranges, one per thread (bounds round(i·count/threads)), and computes
 * each range in a worker thread started on `worker()` with `RangeData`, or inline when workers are unavailable
 * or `parallel` is false. A worker that fails to start or crashes has its range computed inline instead, so the
 * results are those of the inline path whenever each item depends only on the task and its own index.
 * Returns each range's result with the bounds, and how many ranges worker threads computed.
 * Cost: the work's own / threads, plus one thread start per range. Common practice (static block partition of
 * independent tasks).
 */
export async function runRanges<Task, T>(options: RangePoolOptions<Task, T>): Promise<{ parts: T[]; bounds: number[]; workers: number }> {
  const { task, count, signal } = options;
  const cores = options.threads ?? (typeof os.availableParallelism === 'function' ? os.availableParallelism() : os.cpus().length);
  const threads = Math.max(1, Math.min(cores, Math.floor(count / options.minPerWorker)));
  let url: URL | null = null;
  try {
    url = options.worker();
  } catch {
    url = null;
  }
  const useWorkers = options.parallel !== false && threads > 1 && url !== null && url.protocol === 'file:' && !process.env.NEXT_RUNTIME;
  const ranges = useWorkers ? threads : 1;
  const bounds = Array.from({ length: ranges + 1 }, (_, i) => Math.round((i * count) / ranges));
  const done = new Array<number>(ranges).fill(0);
  const report = (i: number) => (k: number) => {
    done[i] = k;
    options.onProgress?.(done.reduce((a, b) => a + b, 0) / Math.max(1, count));
  };
  let workers = 0;
  const parts = await Promise.all(
    bounds.slice(0, -1).map(async (from, i) => {
      const to = bounds[i + 1];
      if (!useWorkers) return options.inline(from, to, report(i), signal);
      try {
        const part = await inWorker<Task, T>(url!, { task, from, to }, report(i), signal);
        workers++;
        return part;
      } catch (error) {
        if (error instanceof CancelledError) throw error;
        return options.inline(from, to, report(i), signal);
      }
    }),
  );
  return { parts, bounds, workers };
}

async function inWorker<Task, T>(url: URL, data: RangeData<Task>, onDone: (done: number) => void, signal?: AbortSignal): Promise<T> {
  if (signal?.aborted) throw new CancelledError();
  const { Worker } = await import('node:worker_threads');
  return new Promise((resolve, reject) => {
    const worker = new Worker(url, { workerData: data });
    const abort = () => {
      void worker.terminate();
      reject(new CancelledError());
    };
    signal?.addEventListener('abort', abort, { once: true });
    worker.on('message', (m: RangeMessage<T>) => {
      if (m.progress !== undefined) onDone(m.progress);
      if (m.result !== undefined) {
        signal?.removeEventListener('abort', abort);
        onDone(data.to - data.from);
        resolve(m.result);
        void worker.terminate();
      }
    });
    worker.once('error', (error) => {
      signal?.removeEventListener('abort', abort);
      reject(error);
    });
    worker.once('exit', (code) => {
      if (code !== 0 && !signal?.aborted) reject(new Error(`worker thread exited with code ${code}`));
    });
  });
}

/**
 * The worker side of `runRanges`: computes the range in `workerData` and posts the result back with its typed
 * arrays' buffers transferred (not copied). `compute` may report progress, posted every `progressEvery` items.
 */
export async function answerRange<Task, T extends { [K in keyof T]: Float64Array }>(
  compute: (task: Task, from: number, to: number, onEach: (done: number) => void) => T,
  progressEvery = 5,
): Promise<void> {
  const { parentPort, workerData } = await import('node:worker_threads');
  const { task, from, to } = workerData as RangeData<Task>;
  const result = compute(task, from, to, (done) => {
    if (done % progressEvery === 0) parentPort!.postMessage({ progress: done } satisfies RangeMessage<T>);
  });
  parentPort!.postMessage(
    { result } satisfies RangeMessage<T>,
    Object.values<Float64Array>(result).map((a) => a.buffer as ArrayBuffer),
  );
}
