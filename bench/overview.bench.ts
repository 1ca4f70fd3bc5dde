/**
 * Screen reads at portfolio scale: the overview over 500 series (2 rules each, a stored snapshot with 2,000-point
 * curves, 50,000 alerts of which 1,000 open), and a tuning-panel preview of a 5,000-point record with 199
 * surrogates. Targets: overview < 3 s on the first load of a process (every snapshot's curves read once), < 300 ms
 * after; preview < 3 s (one interactive recomputation).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { BenchRow } from './index';

export const title = 'screens';

const DAY = 86_400_000;
const SERIES = 500;
const ALERTS = 50_000;

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[sorted.length >> 1];
}

export async function run(): Promise<BenchRow[]> {
  process.env.DATA_DIR = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-bench-screens-'));
  process.env.DATABASE_PATH = '';
  const { migrateUp } = await import('@/migrations');
  const { db, writeTransaction, Series } = await import('@/models');
  const { fetchSeriesOverview } = await import('@/lib/overview');
  const { previewAnalysis } = await import('@/lib/analysis/preview');
  const { analysisSettingsSchema } = await import('@/lib/engine/settings');
  const { simulateAr1 } = await import('@/lib/demo/models');
  await migrateUp();
  const sequelize = await db();
  const now = Date.now();
  const stamp = new Date(now).toISOString().replace('T', ' ').replace('Z', ' +00:00');
  const curve = Array.from({ length: 2000 }, (_, i) => Math.sin(i / 50));
  const curves = JSON.stringify({ stride: 1, time: curve.map((_, i) => now - (2000 - i) * DAY), value: curve, trend: curve, residual: curve, indicators: { ac1: curve, variance: curve }, surrogateTaus: {} });
  const summary = JSON.stringify({ n: 2000, kendall: { ac1: { tau: 0.4, p: 0.01 }, variance: { tau: 0.2, p: 0.2 } }, significance: { ac1: { p: 0.02, count: 99, method: 'ar1' } } });
  await writeTransaction(async (transaction) => {
    const q = (sql: string, replacements: Record<string, unknown>) => sequelize.query(sql, { replacements, transaction });
    for (let s = 1; s <= SERIES; s++) {
      await q(`INSERT INTO series (id, slug, name, site, unit, description, interval_ms, time_zone, csv_mapping, settings, duplicate_policy, needs_analysis, created_at, updated_at)
               VALUES (:s, :slug, :name, :site, '', '', :dt, 'UTC', '{}', :settings, 'reject', 0, :stamp, :stamp)`,
        { s, slug: `bench-${s}`, name: `Bench series ${s}`, site: `Site ${s % 20}`, dt: DAY, settings: JSON.stringify({ indicators: ['ac1', 'variance'] }), stamp });
      await q(`INSERT INTO observations (series_id, t, value) VALUES ${Array.from({ length: 50 }, (_, i) => `(${s}, ${now - (50 - i) * DAY}, ${i})`).join(',')}`, {});
      await q(`INSERT INTO analysis_snapshots (id, series_id, settings, summary, curves, status, n, created_at, updated_at) VALUES (:s, :s, :settings, :summary, :curves, 'ok', 2000, :stamp, :stamp)`,
        { s, settings: JSON.stringify({ indicators: ['ac1', 'variance'] }), summary, curves, stamp });
      for (const [k, indicator] of [[0, 'ac1'], [1, 'variance']] as const) {
        const rule = 2 * s - 1 + k;
        await q(`INSERT INTO alert_rules (id, series_id, indicator, min_tau, persistence, severity, quiet_period_hours, active, level_direction, created_at, updated_at)
                 VALUES (:rule, :s, :indicator, 0.3, 1, :severity, 0, 1, 'above', :stamp, :stamp)`, { rule, s, indicator, severity: k ? 'watch' : 'warning', stamp });
        await q(`INSERT INTO rule_evaluations (rule_id, series_id, snapshot_id, tau, passed, streak, created_at, updated_at) VALUES (:rule, :s, :s, 0.4, :passed, 1, :stamp, :stamp)`,
          { rule, s, passed: s % 3 === 0 ? 1 : 0, stamp });
      }
    }
    for (let a = 0; a < ALERTS; a += 500) {
      const rows = Array.from({ length: 500 }, (_, j) => {
        const i = a + j;
        const rule = (i % (2 * SERIES)) + 1;
        const series = Math.ceil(rule / 2);
        const open = i < 2 * SERIES;
        return `(${series}, ${rule}, '${open ? (i % 3 ? 'new' : 'escalated') : i % 2 ? 'confirmed' : 'dismissed'}', 'watch', ${series}, ${series}, '${stamp}', '${stamp}')`;
      });
      await q(`INSERT INTO alerts (series_id, rule_id, state, severity, first_snapshot_id, latest_snapshot_id, created_at, updated_at) VALUES ${rows.join(',')}`, {});
    }
  });

  const times: number[] = [];
  let rows = 0;
  for (let i = 0; i < 5; i++) {
    const t0 = performance.now();
    const overview = await fetchSeriesOverview(1);
    times.push(performance.now() - t0);
    rows = overview.rows.length;
  }
  const cold = times[0];
  const overviewMs = median(times.slice(1));

  const n = 5000;
  const values = simulateAr1({ n, phi: 0.7, sigma: 1, mean: 10, seed: 3 });
  await writeTransaction(async (transaction) => {
    await sequelize.query('DELETE FROM observations WHERE series_id = 1', { transaction });
    await sequelize.query(`INSERT INTO observations (series_id, t, value) VALUES ${Array.from(values, (v, i) => `(1, ${Date.UTC(1990, 0, 1) + i * DAY}, ${v})`).join(',')}`, { transaction });
  });
  const series = (await Series.findByPk(1))!;
  const settings = analysisSettingsSchema.parse({ surrogates: 199, indicators: ['ac1', 'variance'] });
  const t1 = performance.now();
  const view = await previewAnalysis(series, settings);
  const previewMs = performance.now() - t1;

  return [
    { case: 'overview, first load (reads every snapshot curve once)', n: `${SERIES} series, ${ALERTS} alerts`, value: cold, unit: 'ms', target: '< 3000 ms', pass: cold < 3000, note: `${rows} rows` },
    { case: 'overview, later loads (3 aggregate queries)', n: `${SERIES} series, ${ALERTS} alerts`, value: overviewMs, unit: 'ms', target: '< 300 ms', pass: overviewMs < 300, note: 'median of 4' },
    { case: 'tuning preview, 199 AR(1) surrogates, ac1 + variance', n: n + 50, value: previewMs, unit: 'ms', target: '< 3000 ms', pass: previewMs < 3000, note: `${view.curves.time.length} chart points` },
  ];
}
