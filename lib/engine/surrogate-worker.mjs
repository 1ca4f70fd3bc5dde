// Worker thread for surrogate-pool.ts. Plain JavaScript so it starts without a TypeScript loader;
// it registers tsx itself, then imports the engine's TypeScript source.
import { parentPort, workerData } from 'node:worker_threads';

const { tsImport } = await import('tsx/esm/api');
const { surrogateTaus } = await tsImport('./surrogates.ts', import.meta.url);
const { job, from, to } = workerData;
const result = surrogateTaus(job, from, to);
parentPort.postMessage(result, Object.values(result).map((a) => a.buffer));
