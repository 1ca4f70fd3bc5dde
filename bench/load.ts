/**
 * `npm run bench:load` — the production server under 50 concurrent signed-in clients, on a portfolio-sized
 * database: 500 series, 1,000,000 observations, 50,000 alerts (with their rules, snapshots, evaluations and
 * events). Clients read the alert queues (API pages and the /alerts screen) and series (API and the series
 * screen) for 30 s on loopback, with a bound on the total number of requests. Prints requests, errors and
 * p50/p95/p99 per endpoint; the target is zero errors and p95 < 300 ms. A benchmark, not a test.
 *
 * Two scenarios, each with its own table: a closed loop (no pause) and 50 people each asking once a second.
 * Options (environment): LOAD_CLIENTS (50), LOAD_SECONDS (30, per scenario), LOAD_MAX_REQUESTS (30000, per scenario),
 * LOAD_THINK_MS (comma-separated pauses in ms, one scenario each; default 0,1000), LOAD_KEEP=1 keeps the
 * temp DATA_DIR, LOAD_DATA_DIR reuses one built before (skips generation).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Session } from '../tests/support/session';

import { LOAD_PORTFOLIO, generatePortfolio, portfolioSlug } from './portfolio';

const { series: SERIES, observationsPerSeries: OBSERVATIONS_PER_SERIES, rulesPerSeries: RULES_PER_SERIES, alertsPerRule: ALERTS_PER_RULE } = LOAD_PORTFOLIO;
const TARGET_P95_MS = 300;

const CLIENTS = Number(process.env.LOAD_CLIENTS || 50);
const SECONDS = Number(process.env.LOAD_SECONDS || 30);
const MAX_REQUESTS = Number(process.env.LOAD_MAX_REQUESTS || 30_000);
/**
 * Pauses of each client between its requests, one scenario each: 0 = a closed loop, every client asking again at once
 * (the worst case); 1000 = 50 people each opening a screen or a page of data every second.
 */
const THINK_TIMES = (process.env.LOAD_THINK_MS || '0,1000').split(',').map(Number);

function log(line: string): void {
  console.error(`[bench:load] ${line}`);
}

interface Endpoint {
  name: string;
  path: (client: number, i: number) => string;
}

const QUEUES = ['triage', 'escalated', 'closed', 'all'] as const;
const slug = (k: number) => portfolioSlug(k);

const ENDPOINTS: Endpoint[] = [
  { name: 'GET /api/alerts?queue&page', path: (c, i) => `/api/alerts?queue=${QUEUES[(c + i) % QUEUES.length]}&page=${1 + ((c * 7 + i) % 40)}` },
  { name: 'GET /alerts (page)', path: (c, i) => `/alerts?queue=${QUEUES[(c + i) % QUEUES.length]}` },
  { name: 'GET /api/series/{slug}', path: (c, i) => `/api/series/${slug(c * 31 + i)}` },
  { name: 'GET /series/{slug} (page)', path: (c, i) => `/series/${slug(c * 17 + i)}` },
];

/** Nearest-rank percentile (common practice for latency reports). */
function percentile(sorted: number[], p: number): number {
  if (sorted.length === 0) return NaN;
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))];
}

async function main(): Promise<number> {
  const { startApp, DEMO_PASSWORD } = await import('../tests/support/app');
  const { signedIn } = await import('../tests/support/session');
  const reuse = process.env.LOAD_DATA_DIR;
  const dataDir = reuse ?? fs.mkdtempSync(path.join(os.tmpdir(), 'bw-load-'));
  if (!reuse) await generatePortfolio(dataDir, DEMO_PASSWORD);
  log('starting the production server …');
  const app = await startApp({ dataDir, scheduler: false });
  try {
    const emails = ['viewer', 'analyst', 'lead', 'admin'].map((r) => `${r}@brinkwatch.test`);
    const sessions = [];
    for (let c = 0; c < CLIENTS; c++) sessions.push(await signedIn(app.baseUrl, emails[c % emails.length], DEMO_PASSWORD));
    // Untimed passes, several at once so every web worker gets some, so first-request compilation does not count.
    for (const endpoint of ENDPOINTS) {
      await Promise.all(sessions.slice(0, 8).map(async (session, c) => (await session.fetch(endpoint.path(c, 0))).arrayBuffer()));
    }

    const alone = await serviceTimes(sessions[0]);
    let allPassed = true;
    for (const thinkMs of THINK_TIMES) allPassed = (await runScenario(sessions, thinkMs, alone)) && allPassed;
    console.log(allPassed ? '\npass: every scenario met its target' : '\nFAIL: at least one scenario missed its target');
    return allPassed ? 0 : 1;
  } finally {
    await app.stop();
    if (!reuse && process.env.LOAD_KEEP !== '1') fs.rmSync(dataDir, { recursive: true, force: true });
    else log(`data kept in ${dataDir}`);
  }
}

const ALONE_REQUESTS = 24;

/**
 * Each endpoint asked by one client at a time, so nothing queues: the median is what one request costs the server
 * (plus a loopback round trip). It bounds the closed loop: with every client asking again at once, N clients on
 * K cores cannot average below N × (mean cost) / K (Little's law: clients = throughput × time in the system).
 */
async function serviceTimes(session: Session): Promise<Map<string, number>> {
  const medians = new Map<string, number>();
  for (const endpoint of ENDPOINTS) {
    const times: number[] = [];
    for (let i = 0; i < ALONE_REQUESTS; i++) {
      const t0 = performance.now();
      await (await session.fetch(endpoint.path(i, i))).arrayBuffer();
      times.push(performance.now() - t0);
    }
    medians.set(
      endpoint.name,
      percentile(
        times.sort((a, b) => a - b),
        50,
      ),
    );
  }
  return medians;
}

/** One timed run of every client at once with `thinkMs` between a client's requests; prints its table, returns false on a miss. */
async function runScenario(sessions: Session[], thinkMs: number, alone: Map<string, number>): Promise<boolean> {
  const latencies = new Map<string, number[]>(ENDPOINTS.map((e) => [e.name, []]));
  const errors = new Map<string, string[]>(ENDPOINTS.map((e) => [e.name, []]));
  let issued = 0;
  const deadline = Date.now() + SECONDS * 1000;
  const startedAt = performance.now();
  log(`${CLIENTS} clients for ${SECONDS} s (at most ${MAX_REQUESTS} requests) …`);
  await Promise.all(
    sessions.map(async (session, c) => {
      // With a think time, clients start spread over one pause (evenly, so runs compare), as people arrive at
      // different moments; otherwise all 50 would ask in lock-step waves, one burst per pause.
      if (thinkMs) await new Promise((r) => setTimeout(r, (thinkMs * c) / CLIENTS));
      for (let i = 0; Date.now() < deadline && issued < MAX_REQUESTS; i++) {
        issued++;
        const endpoint = ENDPOINTS[(c + i) % ENDPOINTS.length];
        const t0 = performance.now();
        try {
          const response = await session.fetch(endpoint.path(c, i));
          await response.arrayBuffer();
          if (response.status !== 200) errors.get(endpoint.name)!.push(`${response.status} ${endpoint.path(c, i)}`);
        } catch (error) {
          errors.get(endpoint.name)!.push(String(error));
        }
        latencies.get(endpoint.name)!.push(performance.now() - t0);
        if (thinkMs) await new Promise((r) => setTimeout(r, thinkMs));
      }
    }),
  );
  const elapsed = (performance.now() - startedAt) / 1000;

  const head = ['endpoint', 'alone ms', 'requests', 'errors', 'p50 ms', 'p95 ms', 'p99 ms', 'target', 'result'];
  const rows: string[][] = [];
  let failed = false;
  let total = 0;
  for (const endpoint of ENDPOINTS) {
    const sorted = latencies.get(endpoint.name)!.sort((a, b) => a - b);
    const errorCount = errors.get(endpoint.name)!.length;
    const p95 = percentile(sorted, 95);
    const pass = errorCount === 0 && p95 < TARGET_P95_MS;
    failed ||= !pass;
    total += sorted.length;
    rows.push([
      endpoint.name,
      alone.get(endpoint.name)!.toFixed(1),
      String(sorted.length),
      String(errorCount),
      percentile(sorted, 50).toFixed(0),
      p95.toFixed(0),
      percentile(sorted, 99).toFixed(0),
      `p95 < ${TARGET_P95_MS}, 0 errors`,
      pass ? 'pass' : 'FAIL',
    ]);
  }
  const widths = head.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
  const line = (cells: string[]) =>
    cells
      .map((cell, i) => (i >= 1 && i <= 6 ? cell.padStart(widths[i]) : cell.padEnd(widths[i])))
      .join('  ')
      .trimEnd();
  console.log(
    `\nload: ${CLIENTS} clients (think time ${thinkMs} ms), ${total} requests in ${elapsed.toFixed(1)} s (${(total / elapsed).toFixed(0)} req/s), ` +
      `${SERIES} series, ${SERIES * OBSERVATIONS_PER_SERIES} observations, ${SERIES * RULES_PER_SERIES * ALERTS_PER_RULE} alerts; ` +
      `${os.cpus().length} cores, Node ${process.version}`,
  );
  console.log(line(head));
  console.log(widths.map((w) => '-'.repeat(w)).join('  '));
  for (const row of rows) console.log(line(row));
  if (!thinkMs) {
    const meanCost = ENDPOINTS.reduce((sum, e) => sum + alone.get(e.name)!, 0) / ENDPOINTS.length;
    const cores = os.availableParallelism();
    console.log(
      `alone ms: one request at a time. Closed-loop floor: ${CLIENTS} clients × ${meanCost.toFixed(1)} ms / ${cores} cores ` +
        `≈ ${((CLIENTS * meanCost) / cores).toFixed(0)} ms mean latency with no queueing loss at all (Little's law), against a p95 target of ${TARGET_P95_MS} ms`,
    );
  }
  for (const [name, list] of errors) if (list.length) console.log(`errors on ${name} (first 5): ${list.slice(0, 5).join('; ')}`);
  console.log(failed ? 'FAIL: see the rows above' : 'pass: zero errors and every p95 under target');
  return !failed;
}

main().then(
  (code) => {
    process.exitCode = code;
  },
  (error) => {
    console.error(error);
    process.exitCode = 1;
  },
);
