/**
 * A portfolio-sized database for benchmarks, built through the product's own migrations and seed (the four demo
 * accounts) and then bulk-loaded with plain SQL: series `portfolio-001`…, daily observations, rules, snapshots
 * (one real engine analysis copied to every series), evaluations, and alerts with their timeline events (per rule
 * the newest open — new, acknowledged or escalated in turn — and the rest closed).
 */
const DAY_MS = 86_400_000;

export interface PortfolioShape {
  series: number;
  observationsPerSeries: number;
  rulesPerSeries: number;
  snapshotsPerSeries: number;
  alertsPerRule: number;
}

/** The load test's database: 500 series × 2,000 = 1,000,000 observations; 500 × 4 rules × 25 = 50,000 alerts. */
export const LOAD_PORTFOLIO: PortfolioShape = { series: 500, observationsPerSeries: 2_000, rulesPerSeries: 4, snapshotsPerSeries: 10, alertsPerRule: 25 };

export const portfolioSlug = (k: number, series = LOAD_PORTFOLIO.series) => `portfolio-${String((k % series) + 1).padStart(3, '0')}`;

/** Median of a sample (the middle element of the sorted copy). */
export function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[sorted.length >> 1];
}

function log(line: string): void {
  console.error(`[bench] ${line}`);
}

/** Builds the database through the product's own migrations and seed, then bulk-loads it with plain SQL. */
export async function generatePortfolio(dataDir: string, password: string, shape: PortfolioShape = LOAD_PORTFOLIO): Promise<void> {
  const { series: SERIES, observationsPerSeries: OBSERVATIONS_PER_SERIES, rulesPerSeries: RULES_PER_SERIES } = shape;
  const { snapshotsPerSeries: SNAPSHOTS_PER_SERIES, alertsPerRule: ALERTS_PER_RULE } = shape;
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
  const { isPostgres } = await import('@/lib/db/dialect');

  await migrateUp();
  await seedIfEmpty({ demo: false, password });
  const sequelize = await db();
  // The few forms the two databases spell differently (the rest is written once: TRUE/FALSE, CAST AS BIGINT).
  const postgres = isPostgres(sequelize);
  const threeDigits = (column: string) => (postgres ? `lpad(${column}::text, 3, '0')` : `printf('%03d', ${column})`);
  const uniform = postgres ? 'random()' : '(abs(random()) % 100000) / 100000.0';
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
       SELECT 'portfolio-' || ${threeDigits('i')}, 'Station ' || ${threeDigits('i')}, 'Site ' || (i % 40), 'm', '', :interval, 'UTC',
              :mapping, :settings, 'reject', FALSE, :stamp, :stamp, :stamp FROM k`,
      { n: SERIES, interval: DAY_MS, mapping: JSON.stringify(defaults.csvMapping), settings: JSON.stringify(defaults.settings), stamp },
    );
    // An AR(1)-like walk per series would need a loop; a seasonal term plus uniform noise from the database's random()
    // gives every series a different, non-constant record, which is all page latency depends on.
    await q(
      `WITH RECURSIVE k(i) AS (SELECT 0 UNION ALL SELECT i + 1 FROM k WHERE i < :last)
       INSERT INTO observations (series_id, t, value)
       SELECT s.id, :start + k.i * CAST(:day AS BIGINT), 10.0 + (k.i % 365) / 365.0 + ${uniform}
       FROM series s CROSS JOIN k`,
      { last: OBSERVATIONS_PER_SERIES - 1, start, day: DAY_MS },
    );
  });
  log(`series and observations in ${Math.round(performance.now() - began)} ms`);

  // One real analysis by the engine; its summary and curves stand in for every series' snapshots.
  const first = await Series.findOne({ where: { slug: portfolioSlug(0) } });
  const template = await refreshSeriesAnalysis(first!);
  if (template.status !== 'ok') throw new Error(`template analysis failed: ${template.error}`);
  log(`template analysis in ${template.durationMs} ms`);

  await writeTransaction(async (transaction) => {
    const q = (sql: string, replacements: Record<string, unknown> = {}) => sequelize.query(sql, { replacements, transaction });
    const indicators = INDICATOR_NAMES.slice(0, RULES_PER_SERIES);
    for (const [k, indicator] of indicators.entries()) {
      await q(
        `INSERT INTO alert_rules (series_id, indicator, min_tau, persistence, severity, quiet_period_hours, active, level_direction, created_at, updated_at)
         SELECT id, :indicator, 0.3, 1, :severity, 0, TRUE, 'above', :stamp, :stamp FROM series ORDER BY id`,
        { indicator, severity: k % 2 ? 'watch' : 'warning', stamp: sqlDate(start) },
      );
    }
    // Snapshots one every 10 days up to now; the template's (id of the real one) is copied into each.
    await q(
      `WITH RECURSIVE k(i) AS (SELECT 1 UNION ALL SELECT i + 1 FROM k WHERE i < :n)
       INSERT INTO analysis_snapshots (series_id, settings, summary, curves, chart_view, status, n, data_from, data_to, duration_ms, created_at, updated_at)
       SELECT s.id, t.settings, t.summary, CASE WHEN k.i = :n THEN t.curves ELSE NULL END, CASE WHEN k.i = :n THEN t.chart_view ELSE NULL END,
              'ok', t.n, t.data_from, t.data_to, t.duration_ms,
              :created, :created
       FROM series s CROSS JOIN k CROSS JOIN analysis_snapshots t WHERE t.id = :template AND s.id <> t.series_id
       ORDER BY k.i, s.id`,
      { n: SNAPSHOTS_PER_SERIES, template: template.id, created: sqlDate(now - DAY_MS) },
    );
    await q(
      `INSERT INTO rule_evaluations (rule_id, series_id, snapshot_id, tau, kendall_p, surrogate_p, passed, streak, outcome, created_at, updated_at)
       SELECT r.id, r.series_id, a.id, 0.45, 0.001, 0.02, TRUE, 1, 'open', a.created_at, a.created_at
       FROM alert_rules r JOIN analysis_snapshots a ON a.series_id = r.series_id`,
    );
  });

  // 25 alerts per rule over the last two years: the newest open (new/acknowledged/escalated), the rest closed.
  const rules = await sequelize.query<{ id: number; series_id: number; severity: string }>('SELECT id, series_id, severity FROM alert_rules ORDER BY id', {
    type: 'SELECT' as never,
  });
  const snapshots = new Map<number, number>();
  for (const row of await sequelize.query<{ series_id: number; latest: number }>(
    'SELECT series_id, MAX(id) AS latest FROM analysis_snapshots GROUP BY series_id',
    { type: 'SELECT' as never },
  ))
    snapshots.set(row.series_id, row.latest);
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
        rows.push([
          rule.series_id,
          rule.id,
          state,
          rule.severity,
          assignee,
          snapshot,
          snapshot,
          0.3 + (a % 50) / 100,
          state === 'dismissed' ? DISMISS_REASONS[a % DISMISS_REASONS.length] : null,
          open ? null : sqlDate(createdAt + 5 * DAY_MS),
          sqlDate(createdAt),
          sqlDate(open ? createdAt : createdAt + 5 * DAY_MS),
        ]);
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
