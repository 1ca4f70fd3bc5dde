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
  /** the range it answers (a kept thread takes one range after another) */
  job: number;
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
 * Cost: the work's own / threads, plus a thread start the first time a thread is needed (threads are kept). Common practice (static block partition of
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

/**
 * Threads kept between runs, idle, per worker module. A thread is started once and then takes range after range:
 * starting and ending a thread for every range ended isolates while V8 could still be compiling for them on a
 * background thread, which aborted the whole process now and then (Node's "NodePlatform::ForIsolate" assertion).
 * Idle threads are unref'd, so they never keep a process alive; a thread that failed or was stopped is not kept.
 */
const idle = new Map<string, import('node:worker_threads').Worker[]>();
let nextJob = 1;

async function takeThread(url: URL) {
  const kept = idle.get(url.href)?.pop();
  if (kept) {
    kept.ref();
    return kept;
  }
  const { Worker } = await import('node:worker_threads');
  const worker = new Worker(url);
  // An idle thread that fails leaves the pool; its error is the running job's to report, if there is one.
  worker.on('error', () => undefined);
  worker.once('exit', () => {
    const list = idle.get(url.href);
    const at = list?.indexOf(worker) ?? -1;
    if (at >= 0) list!.splice(at, 1);
  });
  return worker;
}

function keepThread(url: URL, worker: import('node:worker_threads').Worker): void {
  const list = idle.get(url.href) ?? [];
  // more idle threads than cores are never all needed at once
  if (list.length >= os.availableParallelism()) {
    void worker.terminate();
    return;
  }
  worker.unref();
  list.push(worker);
  idle.set(url.href, list);
}

async function inWorker<Task, T>(url: URL, data: RangeData<Task>, onDone: (done: number) => void, signal?: AbortSignal): Promise<T> {
  if (signal?.aborted) throw new CancelledError();
  const worker = await takeThread(url);
  const job = nextJob++;
  return new Promise((resolve, reject) => {
    const finish = () => {
      signal?.removeEventListener('abort', abort);
      worker.off('message', onMessage);
      worker.off('error', onError);
      worker.off('exit', onExit);
    };
    const abort = () => {
      finish();
      void worker.terminate();
      reject(new CancelledError());
    };
    const onMessage = (m: RangeMessage<T>) => {
      if (m.job !== job) return;
      if (m.progress !== undefined) onDone(m.progress);
      if (m.result !== undefined) {
        finish();
        onDone(data.to - data.from);
        keepThread(url, worker);
        resolve(m.result);
      }
    };
    const onError = (error: Error) => {
      finish();
      void worker.terminate();
      reject(error);
    };
    const onExit = (code: number) => {
      finish();
      reject(new Error(`worker thread exited with code ${code}`));
    };
    signal?.addEventListener('abort', abort, { once: true });
    worker.on('message', onMessage);
    worker.once('error', onError);
    worker.once('exit', onExit);
    worker.postMessage({ ...data, job } satisfies RangeData<Task> & { job: number });
  });
}

/**
 * The worker side of `runRanges`: takes ranges (`RangeData` with a job number) as messages for as long as the
 * thread lives, computes each and posts the result back with its typed arrays' buffers transferred (not copied).
 * `compute` may report progress, posted every `progressEvery` items.
 */
export async function answerRange<Task, T extends { [K in keyof T]: Float64Array }>(
  compute: (task: Task, from: number, to: number, onEach: (done: number) => void) => T,
  progressEvery = 5,
): Promise<void> {
  const { parentPort } = await import('node:worker_threads');
  parentPort!.on('message', ({ task, from, to, job }: RangeData<Task> & { job: number }) => {
    const result = compute(task, from, to, (done) => {
      if (done % progressEvery === 0) parentPort!.postMessage({ job, progress: done } satisfies RangeMessage<T>);
    });
    parentPort!.postMessage(
      { job, result } satisfies RangeMessage<T>,
      Object.values<Float64Array>(result).map((a) => a.buffer as ArrayBuffer),
    );
  });
}
