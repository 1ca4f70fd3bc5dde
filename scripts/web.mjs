/**
 * The web tier of `npm start`: one `next start` worker per core (WEB_WORKERS overrides), sharing one listening
 * port through Node's cluster module, which hands each new connection to the next worker in turn. The workers are
 * stateless (sessions are signed cookies, everything else is in the database), so any of them can answer any
 * request. A worker that dies is replaced.
 */
import cluster from 'node:cluster';
import os from 'node:os';
import path from 'node:path';

const workers = Math.max(1, Number(process.env.WEB_WORKERS || os.availableParallelism()));
// Idle connections outlive a load balancer's (commonly 60 s) and any client's own keep-alive, so the server is
// never the side that closes a connection a client is about to reuse.
const keepAliveMs = String(process.env.KEEP_ALIVE_TIMEOUT_MS || 65_000);

cluster.setupPrimary({
  exec: path.join(process.cwd(), 'node_modules/next/dist/bin/next'),
  args: ['start', '-p', process.env.PORT || '3000', '-H', process.env.HOST || '127.0.0.1', '--keepAliveTimeout', keepAliveMs],
});

let stopping = false;
const listened = new Set();
function stopAll(exitCode) {
  stopping = true;
  for (const worker of Object.values(cluster.workers ?? {})) worker?.process.kill('SIGTERM');
  setTimeout(() => process.exit(exitCode), 1000).unref();
}
for (let i = 0; i < workers; i++) cluster.fork();
cluster.on('listening', (worker) => listened.add(worker.id));
cluster.on('exit', (worker, code, signal) => {
  if (stopping) return;
  // One that never got to listen (port taken, bad build) would fail again: stop, so whoever started us sees it.
  if (!listened.has(worker.id)) {
    console.error(`[brinkwatch] web worker ${worker.process.pid} exited before listening (${signal ?? code}); stopping`);
    stopAll(code || 1);
    return;
  }
  console.error(`[brinkwatch] web worker ${worker.process.pid} exited (${signal ?? code}); starting another`);
  setTimeout(() => cluster.fork(), 1000);
});
for (const signal of ['SIGTERM', 'SIGINT']) {
  process.on(signal, () => stopAll(0));
}
