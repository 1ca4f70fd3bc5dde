import { parentPort, workerData } from 'node:worker_threads';
import { surrogateTaus, type SurrogateJob } from './surrogates';

// Body of one surrogate worker thread (see surrogate-pool.ts): the taus of surrogates from..to−1, sent back with
// their buffers transferred. Started through surrogate-worker.mjs from source, or as the command line's bundled
// dist/surrogate-worker.mjs.
const { job, from, to } = workerData as { job: SurrogateJob; from: number; to: number };
const result = surrogateTaus(job, from, to);
parentPort!.postMessage(result, Object.values(result).map((a) => a.buffer as ArrayBuffer));
