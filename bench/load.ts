/**
 * `npm run bench:load` — the production server under 50 concurrent signed-in clients, on a portfolio-sized
 * database: 500 series, 1,000,000 observations, 50,000 alerts (with their rules, snapshots, evaluations and
 * events), once on each database: SQLite (the default) and PostgreSQL (a throwaway server started by
 * scripts/test-postgres.sh, or the one BRINKWATCH_TEST_POSTGRES_URL names). Clients read the alert queues (API pages
 * and the /alerts screen) and series (API and the series screen) for 30 s on loopback, with a bound on the total
 * number of requests. A benchmark, not a test.
 *
 * Two scenarios per database: a closed loop (no pause: every client asks again at once, so it measures throughput —
 * requests/s, and per core) and 50 people each asking once a second (paced: it measures the latency people see).
 * Each database's run prints a table per scenario (p50/p95/p99 per endpoint); the end prints one row per database
 * and scenario. Targets: zero errors everywhere; paced p95 < 300 ms. The closed loop's latency has no target: it is
 * set by clients × cost per request ÷ cores (printed, Little's law), not by the server's quality.
 * Options (environment): LOAD_DATABASES (sqlite,postgres), LOAD_CLIENTS (50), LOAD_SECONDS (30, per scenario),
 * LOAD_MAX_REQUESTS (30000, per scenario), LOAD_THINK_MS (comma-separated pauses in ms, one scenario each; default
 * 0,1000), LOAD_KEEP=1 keeps the temp DATA_DIR, LOAD_DATA_DIR reuses a SQLite one built before (skips generation).
 */
import { execFileSync, spawn } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { Session } from '../tests/support/session';

import { LOAD_PORTFOLIO, generatePortfolio, portfolioSlug } from './portfolio';

const { series: SERIES, observationsPerSeries: OBSERVATIONS_PER_SERIES, rulesPerSeries: RULES_PER_SERIES, alertsPerRule: ALERTS_PER_RULE } = LOAD_PORTFOLIO;
/** The paced scenario's target: people asking once a second wait less than this at p95. */
const PACED_TARGET_P95_MS = 300;

const CLIENTS = Number(process.env.LOAD_CLIENTS || 50);
const SECONDS = Number(process.env.LOAD_SECONDS || 30);
const MAX_REQUESTS = Number(process.env.LOAD_MAX_REQUESTS || 30_000);
/**
 * Pauses of each client between its requests, one scenario each: 0 = a closed loop, every client asking again at once
 * (the worst case); 1000 = 50 people each opening a screen or a page of data every second.
 */
const THINK_TIMES = (process.env.LOAD_THINK_MS || '0,1000').split(',').map(Number);

type Database = 'sqlite' | 'postgres';
const DATABASES = (process.env.LOAD_DATABASES || 'sqlite,postgres').split(',').map((name): Database => {
  if (name !== 'sqlite' && name !== 'postgres') throw new Error(`LOAD_DATABASES: "${name}" is neither sqlite nor postgres`);
  return name;
});

/** Cores counted for "per core": what Node reports this process may use (the web tier starts one worker per such core). */
const CORES = os.availableParallelism();
/** Web workers of the started server: WEB_WORKERS, else one per core (scripts/web.mjs). */
const WEB_WORKERS = Math.max(1, Number(process.env.WEB_WORKERS || CORES));

function log(line: string): void {
  console.error(`[bench:load] ${line}`);
}

/** What one scenario on one database gave, for the closing table. */
interface ScenarioResult {
  database: Database;
  thinkMs: number;
  requests: number;
  seconds: number;
  errors: number;
  p50: number;
  p95: number;
  p99: number;
  pass: boolean;
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

/**
 * One database's run, in a process of its own (LOAD_DATABASE set by `main`), so each has its own database connection
 * and configuration: build the portfolio, start the server on it, run every scenario, write the results as JSON to
 * LOAD_RESULT_FILE.
 */
async function runDatabase(database: Database): Promise<void> {
  const { startApp, DEMO_PASSWORD } = await import('../tests/support/app');
  const { signedIn } = await import('../tests/support/session');
  const { useDataDir } = await import('../tests/support/temp-db');
  const reuse = database === 'sqlite' ? process.env.LOAD_DATA_DIR : undefined;
  const dataDir = reuse ?? fs.mkdtempSync(path.join(os.tmpdir(), 'bw-load-'));
  // On PostgreSQL a fresh database on the test server, named in the folder so the started product finds it too.
  useDataDir(dataDir);
  if (!reuse) await generatePortfolio(dataDir, DEMO_PASSWORD);
  log(`${database}: starting the production server …`);
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
    const results: ScenarioResult[] = [];
    for (const thinkMs of THINK_TIMES) results.push(await runScenario(database, sessions, thinkMs, alone));
    fs.writeFileSync(process.env.LOAD_RESULT_FILE!, JSON.stringify(results));
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

/** One timed run of every client at once with `thinkMs` between a client's requests; prints its table. */
async function runScenario(database: Database, sessions: Session[], thinkMs: number, alone: Map<string, number>): Promise<ScenarioResult> {
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
    const pass = meetsTarget(thinkMs, errorCount, p95);
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
      targetText(thinkMs),
      pass ? 'pass' : 'FAIL',
    ]);
  }
  printTable(
    `\nload on ${database}: ${CLIENTS} clients (think time ${thinkMs} ms), ${total} requests in ${elapsed.toFixed(1)} s (${(total / elapsed).toFixed(0)} req/s), ` +
      `${SERIES} series, ${SERIES * OBSERVATIONS_PER_SERIES} observations, ${SERIES * RULES_PER_SERIES * ALERTS_PER_RULE} alerts; ` +
      `${CORES} cores, ${WEB_WORKERS} web workers, Node ${process.version}`,
    head,
    rows,
    [1, 6],
  );
  if (!thinkMs) {
    const meanCost = ENDPOINTS.reduce((sum, e) => sum + alone.get(e.name)!, 0) / ENDPOINTS.length;
    console.log(
      `alone ms: one request at a time. Closed-loop floor: ${CLIENTS} clients × ${meanCost.toFixed(1)} ms / ${CORES} cores ` +
        `≈ ${((CLIENTS * meanCost) / CORES).toFixed(0)} ms mean latency with no queueing loss at all (Little's law)`,
    );
  }
  for (const [name, list] of errors) if (list.length) console.log(`errors on ${name} (first 5): ${list.slice(0, 5).join('; ')}`);
  console.log(failed ? 'FAIL: see the rows above' : 'pass: every row met its target');
  const all = [...latencies.values()].flat().sort((a, b) => a - b);
  const errorTotal = [...errors.values()].reduce((sum, list) => sum + list.length, 0);
  return {
    database,
    thinkMs,
    requests: total,
    seconds: elapsed,
    errors: errorTotal,
    p50: percentile(all, 50),
    p95: percentile(all, 95),
    p99: percentile(all, 99),
    pass: !failed,
  };
}

/** Zero errors in every scenario; a latency target only where clients pause (the closed loop's latency is N × cost ÷ cores). */
function meetsTarget(thinkMs: number, errorCount: number, p95: number): boolean {
  return errorCount === 0 && (thinkMs === 0 || p95 < PACED_TARGET_P95_MS);
}

function targetText(thinkMs: number): string {
  return thinkMs === 0 ? '0 errors' : `p95 < ${PACED_TARGET_P95_MS}, 0 errors`;
}

/**
 * The throwaway PostgreSQL server of scripts/test-postgres.sh (loopback, temp folder), unless
 * BRINKWATCH_TEST_POSTGRES_URL already names one. Returns its environment and how to stop it.
 */
function postgresServer(): { env: Record<string, string>; stop: () => void } {
  const given = process.env.BRINKWATCH_TEST_POSTGRES_URL;
  if (given) return { env: { BRINKWATCH_TEST_POSTGRES_URL: given }, stop: () => undefined };
  const script = path.join(__dirname, '../scripts/test-postgres.sh');
  const exports = execFileSync(script, ['start'], { encoding: 'utf8' });
  const env = Object.fromEntries([...exports.matchAll(/^export (\w+)=(.*)$/gm)].map((m) => [m[1], m[2]]));
  log(`PostgreSQL test server at ${env.BRINKWATCH_TEST_POSTGRES_URL}`);
  return { env, stop: () => execFileSync(script, ['stop', env.BRINKWATCH_TEST_POSTGRES_DIR], { stdio: 'inherit' }) };
}

/** Runs one database's pass in a child process (its per-scenario tables go straight to this terminal). */
async function runChild(database: Database, env: Record<string, string>): Promise<ScenarioResult[]> {
  const resultFile = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'bw-load-result-')), 'result.json');
  const child = spawn(process.execPath, ['--import', 'tsx', __filename], {
    stdio: 'inherit',
    env: {
      ...process.env,
      ...env,
      LOAD_DATABASE: database,
      LOAD_RESULT_FILE: resultFile,
      BRINKWATCH_TEST_DIALECT: database,
    },
  });
  const code = await new Promise<number | null>((resolve) => child.once('exit', resolve));
  if (code !== 0 || !fs.existsSync(resultFile)) throw new Error(`the ${database} run failed (exit ${code})`);
  const results = JSON.parse(fs.readFileSync(resultFile, 'utf8')) as ScenarioResult[];
  fs.rmSync(path.dirname(resultFile), { recursive: true, force: true });
  return results;
}

async function main(): Promise<number> {
  const results: ScenarioResult[] = [];
  for (const database of DATABASES) {
    if (database === 'sqlite') {
      results.push(...(await runChild(database, {})));
      continue;
    }
    const server = postgresServer();
    // Interrupted (Ctrl-C reaches the child too), the throwaway server is still stopped and its folder removed.
    const interrupted = () => {
      server.stop();
      process.exit(130);
    };
    process.once('SIGINT', interrupted);
    try {
      results.push(...(await runChild(database, server.env)));
    } finally {
      process.off('SIGINT', interrupted);
      server.stop();
    }
  }
  printSummary(results);
  const allPassed = results.every((r) => r.pass);
  console.log(allPassed ? 'pass: every scenario met its target' : 'FAIL: at least one scenario missed its target');
  return allPassed ? 0 : 1;
}

/** One row per database and scenario: throughput (and per core), pooled latency over every endpoint, errors. */
function printSummary(results: ScenarioResult[]): void {
  const head = ['database', 'scenario', 'requests', 'req/s', 'req/s per core', 'p50 ms', 'p95 ms', 'p99 ms', 'errors', 'target', 'result'];
  const rows = results.map((r) => {
    const rate = r.requests / r.seconds;
    return [
      r.database,
      r.thinkMs === 0 ? 'closed loop' : `paced (each client every ${r.thinkMs} ms)`,
      String(r.requests),
      rate.toFixed(0),
      (rate / CORES).toFixed(1),
      r.p50.toFixed(0),
      r.p95.toFixed(0),
      r.p99.toFixed(0),
      String(r.errors),
      targetText(r.thinkMs),
      r.pass ? 'pass' : 'FAIL',
    ];
  });
  printTable(
    `\nload summary: ${CLIENTS} signed-in clients, ${SECONDS} s per scenario on loopback; every endpoint pooled. ` +
      `Cores = os.availableParallelism() = ${CORES}; the server ran ${WEB_WORKERS} web workers (WEB_WORKERS, default one per core); ` +
      `the load generator, and on PostgreSQL the database server, share those cores.`,
    head,
    rows,
    [2, 8],
  );
}

/** A title, then the table in aligned columns; the columns from `numbers[0]` to `numbers[1]` are right-aligned. */
function printTable(title: string, head: string[], rows: string[][], numbers: [number, number]): void {
  const widths = head.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
  const line = (cells: string[]) =>
    cells
      .map((cell, i) => (i >= numbers[0] && i <= numbers[1] ? cell.padStart(widths[i]) : cell.padEnd(widths[i])))
      .join('  ')
      .trimEnd();
  console.log(title);
  console.log(line(head));
  console.log(widths.map((w) => '-'.repeat(w)).join('  '));
  for (const row of rows) console.log(line(row));
}

const only = process.env.LOAD_DATABASE as Database | undefined;
(only ? runDatabase(only).then(() => 0) : main()).then(
  (code) => {
    process.exitCode = code;
  },
  (error) => {
    console.error(error);
    process.exitCode = 1;
  },
);
