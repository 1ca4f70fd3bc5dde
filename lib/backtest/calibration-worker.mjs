// Worker thread for lib/backtest/pool.ts. Plain JavaScript so it starts without a TypeScript loader;
// it registers tsx itself, then imports the TypeScript source.
import { parentPort, workerData } from 'node:worker_threads';

const { tsImport } = await import('tsx/esm/api');
const { calibrateChunk } = await tsImport('./calibration.ts', import.meta.url);
const { task, from, to } = workerData;
const result = calibrateChunk(task, from, to, (done) => {
  if (done % 5 === 0) parentPort.postMessage({ progress: done });
});
parentPort.postMessage({ result }, Object.values(result).map((a) => a.buffer));
