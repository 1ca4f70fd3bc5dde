// Worker thread for surrogate-pool.ts. Plain JavaScript so it starts without a TypeScript loader;
// it registers tsx itself, then runs the thread's TypeScript source.
const { tsImport } = await import('tsx/esm/api');
await tsImport('./surrogate-thread.ts', import.meta.url);
