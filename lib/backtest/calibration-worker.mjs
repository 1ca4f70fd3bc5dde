// Worker thread for lib/backtest/pool.ts. Plain JavaScript so it starts without a TypeScript loader;
// it registers tsx itself, then runs the thread's TypeScript source.
const { tsImport } = await import('tsx/esm/api');
await tsImport('./calibration-thread.ts', import.meta.url);
