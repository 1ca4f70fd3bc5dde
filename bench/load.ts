/**
 * `npm run bench:load` — the production server under 50 concurrent signed-in clients, on a portfolio-sized
 * database: 500 series, 1,000,000 observations, 50,000 alerts (with their rules, snapshots, evaluations and
 * events). Clients read the alert queues (API pages and the /alerts screen) and series (API and the series
 * screen) for 30 s on loopback, with a bound on the total number of requests. Prints requests, errors and
 * p50/p95/p99 per endpoint; the target is zero errors and p95 < 300 ms. A benchmark, not a test.
 *
 * Options (environment): LOAD_CLIENTS (50), LOAD_SECONDS (30), LOAD_MAX_REQUESTS (30000), LOAD_THINK_MS (0, pause
 * of each client between requests, as a person reading a screen would), LOAD_KEEP=1 keeps the
 * temp DATA_DIR, LOAD_DATA_DIR reuses one built before (skips generation).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

const SERIES = 500;
const OBSERVATIONS_PER_SERIES = 2_000; // 500 × 2,000 = 1,000,000
const RULES_PER_SERIES = 4;
const SNAPSHOTS_PER_SERIES = 10;
const ALERTS_PER_RULE = 25; // 500 × 4 × 25 = 50,000
const DAY_MS = 86_400_000;
const TARGET_P95_MS = 300;

const CLIENTS = Number(process.env.LOAD_CLIENTS || 50);
const SECONDS = Number(process.env.LOAD_SECONDS || 30);
const MAX_REQUESTS = Number(process.env.LOAD_MAX_REQUESTS || 30_000);
/** Pause of each client between its requests; 0 = a closed loop, every client asking again at once (the worst case). */
const THINK_MS = Number(process.env.LOAD_THINK_MS || 0);

function log(line: string): void {
  console.error(`[bench:load] ${line}`);
}

/** Builds the database through the product's own migrations and seed, then bulk-loads it with plain SQL. */
async function generate(dataDir: string, password: string): Promise<void> {
  process.env.DATA_DIR = dataDir;
  process.env.DATABASE_PATH = '';
  const { migrateUp } = await import('@/migrations');
  const { db, writeTransaction, closeDatabase, Series } = await import('@/models');
  const { seedIfEmpty } = await import('@/lib/demo/seed');
  const { seriesCreateSchema } = await import('@/lib/schemas/series');
  const { refreshSeriesAnalysis } = await import('@/lib/analysis/snapshot');
  const { sqlDate } = await import('@/lib/db/sql-date');
  const { INDICATOR_NAMES } = await import('@/lib/engine/settings');
  const { DISMISS_REASONS } = await import('@/lib/schemas/alert');

  await migrateUp();
  await seedIfEmpty({ demo: false, password });
  const sequelize = await db();
  const now = Date.now();
  const end = Math.floor(now / DAY_MS) * DAY_MS;
  const start = end - (OBSERVATIONS_PER_SERIES - 1) * DAY_MS;
  const defaults = seriesCreateSchema.parse({ slug: 'template', name: 'Template' });
  const began = performance.now();

  await writeTransaction(async (transaction) => {
    const q = (sql: string, replacements: Record<string, unknown> = {}) => sequelize.query(sql, { replacements, transaction });
    const stamp = sqlDate(now);
    await q(
      `WITH RECURSIVE k(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM k WHERE i < :n)
       INSERT INTO series (slug, name, site, unit, description, interval_ms, time_zone, csv_mapping, settings, duplicate_policy,
                           needs_analysis, data_changed_at, created_at, updated_at)
       SELECT printf('load-%03d', i), printf('Load station %03d', i), printf('Site %d', i % 40), 'm', '', :interval, 'UTC',
              :mapping, :settings, 'reject', 0, :stamp, :stamp, :stamp FROM k`,
      { n: SERIES, interval: DAY_MS, mapping: JSON.stringify(defaults.csvMapping), settings: JSON.stringify(defaults.settings), stamp },
    );
    // An AR(1)-like walk per series would need a loop; a seasonal term plus uniform noise from SQLite's random()
    // gives every series a different, non-constant record, which is all page latency depends on.
    await q(
      `WITH RECURSIVE k(i) AS (SELECT 0 UNION ALL SELECT i + 1 FROM k WHERE i < :last)
       INSERT INTO observations (series_id, t, value)
       SELECT s.id, :start + k.i * :day, 10.0 + (k.i % 365) / 365.0 + (abs(random()) % 100000) / 100000.0
       FROM series s CROSS JOIN k`,
      { last: OBSERVATIONS_PER_SERIES - 1, start, day: DAY_MS },
    );
  });
  log(`series and observations in ${Math.round(performance.now() - began)} ms`);

  // One real analysis by the engine; its summary and curves stand in for every series' snapshots.
  const first = await Series.findOne({ where: { slug: 'load-001' } });
  const template = await refreshSeriesAnalysis(first!);
  if (template.status !== 'ok') throw new Error(`template analysis failed: ${template.error}`);
  log(`template analysis in ${template.durationMs} ms`);

  await writeTransaction(async (transaction) => {
    const q = (sql: string, replacements: Record<string, unknown> = {}) => sequelize.query(sql, { replacements, transaction });
    const indicators = INDICATOR_NAMES.slice(0, RULES_PER_SERIES);
    for (const [k, indicator] of indicators.entries()) {
      await q(
        `INSERT INTO alert_rules (series_id, indicator, min_tau, persistence, severity, quiet_period_hours, active, level_direction, created_at, updated_at)
         SELECT id, :indicator, 0.3, 1, :severity, 0, 1, 'above', :stamp, :stamp FROM series ORDER BY id`,
        { indicator, severity: k % 2 ? 'watch' : 'warning', stamp: sqlDate(start) },
      );
    }
    // Snapshots one every 10 days up to now; the template's (id of the real one) is copied into each.
    await q(
      `WITH RECURSIVE k(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM k WHERE i < :n)
       INSERT INTO analysis_snapshots (series_id, settings, summary, curves, status, n, data_from, data_to, duration_ms, created_at, updated_at)
       SELECT s.id, t.settings, t.summary, CASE WHEN k.i = :n THEN t.curves ELSE NULL END, 'ok', t.n, t.data_from, t.data_to, t.duration_ms,
              :created, :created
       FROM series s CROSS JOIN k CROSS JOIN analysis_snapshots t WHERE t.id = :template AND s.id <> t.series_id
       ORDER BY k.i, s.id`,
      { n: SNAPSHOTS_PER_SERIES, template: template.id, created: sqlDate(now - DAY_MS) },
    );
    await q(
      `INSERT INTO rule_evaluations (rule_id, series_id, snapshot_id, tau, kendall_p, surrogate_p, passed, streak, outcome, created_at, updated_at)
       SELECT r.id, r.series_id, a.id, 0.45, 0.001, 0.02, 1, 1, 'open', a.created_at, a.created_at
       FROM alert_rules r JOIN analysis_snapshots a ON a.series_id = r.series_id`,
    );
  });

  // 25 alerts per rule over the last two years: the newest open (new/acknowledged/escalated), the rest closed.
  const rules = await sequelize.query<{ id: number; series_id: number; severity: string }>(
    'SELECT id, series_id, severity FROM alert_rules ORDER BY id',
    { type: 'SELECT' as never },
  );
  const snapshots = new Map<number, number>();
  for (const row of await sequelize.query<{ series_id: number; latest: number }>(
    'SELECT series_id, MAX(id) AS latest FROM analysis_snapshots GROUP BY series_id',
    { type: 'SELECT' as never },
  )) snapshots.set(row.series_id, row.latest);
  const users = await sequelize.query<{ id: number }>("SELECT id FROM users WHERE role IN ('analyst', 'lead') ORDER BY id", { type: 'SELECT' as never });
  const openStates = ['new', 'acknowledged', 'escalated'];
  await writeTransaction(async (transaction) => {
    const rows: unknown[][] = [];
    for (const rule of rules) {
      for (let a = 0; a < ALERTS_PER_RULE; a++) {
        const open = a === ALERTS_PER_RULE - 1;
        const createdAt = now - (ALERTS_PER_RULE - a) * 29 * DAY_MS + rule.id * 1000;
        const state = open ? openStates[rule.id % 3] : a % 3 ? 'dismissed' : 'confirmed';
        const snapshot = snapshots.get(rule.series_id)!;
        const assignee = state === 'new' ? null : users[(rule.id + a) % users.length].id;
        rows.push([rule.series_id, rule.id, state, rule.severity, assignee, snapshot, snapshot, 0.3 + (a % 50) / 100,
          state === 'dismissed' ? DISMISS_REASONS[a % DISMISS_REASONS.length] : null,
          open ? null : sqlDate(createdAt + 5 * DAY_MS), sqlDate(createdAt), sqlDate(open ? createdAt : createdAt + 5 * DAY_MS)]);
      }
    }
    const BATCH = 1000;
    for (let i = 0; i < rows.length; i += BATCH) {
      const chunk = rows.slice(i, i + BATCH);
      await sequelize.query(
        `INSERT INTO alerts (series_id, rule_id, state, severity, assignee_id, first_snapshot_id, latest_snapshot_id, evaluation_count, peak_tau,
                             dismiss_reason, closed_at, version, created_at, updated_at)
         VALUES ${chunk.map(() => '(?, ?, ?, ?, ?, ?, ?, 1, ?, ?, ?, 1, ?, ?)').join(', ')}`,
        { replacements: chunk.flat(), transaction },
      );
    }
    await sequelize.query(
      `INSERT INTO alert_events (alert_id, actor_id, action, from_state, to_state, reason, detail, created_at, updated_at)
       SELECT id, NULL, 'open', NULL, 'new', NULL, 'Rule #' || rule_id || ' met.', created_at, created_at FROM alerts`,
      { transaction },
    );
    await sequelize.query(
      `INSERT INTO alert_events (alert_id, actor_id, action, from_state, to_state, reason, detail, created_at, updated_at)
       SELECT id, assignee_id, CASE state WHEN 'dismissed' THEN 'dismiss' WHEN 'confirmed' THEN 'confirm' WHEN 'escalated' THEN 'escalate' ELSE 'acknowledge' END,
              'new', state, dismiss_reason, NULL, updated_at, updated_at FROM alerts WHERE state <> 'new'`,
      { transaction },
    );
  });
  await sequelize.query('ANALYZE');
  const counts = await sequelize.query<{ t: string; n: number }>(
    `SELECT 'series' AS t, COUNT(*) AS n FROM series UNION ALL SELECT 'observations', COUNT(*) FROM observations
     UNION ALL SELECT 'alerts', COUNT(*) FROM alerts UNION ALL SELECT 'alert_events', COUNT(*) FROM alert_events
     UNION ALL SELECT 'analysis_snapshots', COUNT(*) FROM analysis_snapshots UNION ALL SELECT 'rule_evaluations', COUNT(*) FROM rule_evaluations`,
    { type: 'SELECT' as never },
  );
  log(`generated in ${Math.round(performance.now() - began)} ms: ${counts.map((c) => `${c.t} ${c.n}`).join(', ')}`);
  await closeDatabase();
}

interface Endpoint {
  name: string;
  path: (client: number, i: number) => string;
}

const QUEUES = ['triage', 'escalated', 'closed', 'all'] as const;
const slug = (k: number) => `load-${String((k % SERIES) + 1).padStart(3, '0')}`;

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
  if (!reuse) await generate(dataDir, DEMO_PASSWORD);
  log('starting the production server …');
  const app = await startApp({ dataDir, scheduler: false });
  try {
    const emails = ['viewer', 'analyst', 'lead', 'admin'].map((r) => `${r}@brinkwatch.test`);
    const sessions = [];
    for (let c = 0; c < CLIENTS; c++) sessions.push(await signedIn(app.baseUrl, emails[c % emails.length], DEMO_PASSWORD));
    // One untimed pass so first-request compilation and caches do not count against the server.
    for (const endpoint of ENDPOINTS) await (await sessions[0].fetch(endpoint.path(0, 0))).arrayBuffer();

    const latencies = new Map<string, number[]>(ENDPOINTS.map((e) => [e.name, []]));
    const errors = new Map<string, string[]>(ENDPOINTS.map((e) => [e.name, []]));
    let issued = 0;
    const deadline = Date.now() + SECONDS * 1000;
    const startedAt = performance.now();
    log(`${CLIENTS} clients for ${SECONDS} s (at most ${MAX_REQUESTS} requests) …`);
    await Promise.all(
      sessions.map(async (session, c) => {
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
          if (THINK_MS) await new Promise((r) => setTimeout(r, THINK_MS));
        }
      }),
    );
    const elapsed = (performance.now() - startedAt) / 1000;

    const head = ['endpoint', 'requests', 'errors', 'p50 ms', 'p95 ms', 'p99 ms', 'target', 'result'];
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
      rows.push([endpoint.name, String(sorted.length), String(errorCount), percentile(sorted, 50).toFixed(0), p95.toFixed(0),
        percentile(sorted, 99).toFixed(0), `p95 < ${TARGET_P95_MS}, 0 errors`, pass ? 'pass' : 'FAIL']);
    }
    const widths = head.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
    const line = (cells: string[]) => cells.map((cell, i) => (i >= 1 && i <= 5 ? cell.padStart(widths[i]) : cell.padEnd(widths[i]))).join('  ').trimEnd();
    console.log(`\nload: ${CLIENTS} clients (think time ${THINK_MS} ms), ${total} requests in ${elapsed.toFixed(1)} s (${(total / elapsed).toFixed(0)} req/s), ` +
      `${SERIES} series, ${SERIES * OBSERVATIONS_PER_SERIES} observations, ${SERIES * RULES_PER_SERIES * ALERTS_PER_RULE} alerts; ` +
      `${os.cpus().length} cores, Node ${process.version}`);
    console.log(line(head));
    console.log(widths.map((w) => '-'.repeat(w)).join('  '));
    for (const row of rows) console.log(line(row));
    for (const [name, list] of errors) if (list.length) console.log(`errors on ${name} (first 5): ${list.slice(0, 5).join('; ')}`);
    console.log(failed ? '\nFAIL: see the rows above' : '\npass: zero errors and every p95 under target');
    return failed ? 1 : 0;
  } finally {
    await app.stop();
    if (!reuse && process.env.LOAD_KEEP !== '1') fs.rmSync(dataDir, { recursive: true, force: true });
    else log(`data kept in ${dataDir}`);
  }
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
