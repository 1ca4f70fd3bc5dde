/**
 * Alert queues at portfolio scale: 500 series, 1,000 rules, 50,000 alerts (1,000 open) each with the evaluation
 * of its latest snapshot. Target: every queue page (with its four counts) < 200 ms.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { BenchRow } from './index';

export const title = 'alert queues';

const SERIES = 500;
const ALERTS = 50_000;
const OPEN = 1_000;
const TARGET_MS = 200;

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[sorted.length >> 1];
}

export async function run(): Promise<BenchRow[]> {
  process.env.DATA_DIR = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-bench-alerts-'));
  process.env.DATABASE_PATH = '';
  const { migrateUp } = await import('@/migrations');
  const { db, writeTransaction } = await import('@/models');
  const { fetchAlertQueue } = await import('@/lib/alerts/queries');
  const { alertQueueSchema } = await import('@/lib/schemas/alert');
  const { sqlDate } = await import('@/lib/db/sql-date');
  await migrateUp();
  const sequelize = await db();
  const now = Date.now();
  const stamp = sqlDate(now);
  const states = ['confirmed', 'dismissed'];
  await writeTransaction(async (transaction) => {
    const q = (sql: string, replacements: Record<string, unknown> = {}) => sequelize.query(sql, { replacements, transaction });
    await q(`INSERT INTO users (id, email, name, role, active, created_at, updated_at) VALUES (1, 'a@b.test', 'Analyst', 'analyst', 1, :stamp, :stamp)`, { stamp });
    for (let s = 1; s <= SERIES; s++) {
      await q(`INSERT INTO series (id, slug, name, site, unit, description, time_zone, csv_mapping, settings, duplicate_policy, needs_analysis, created_at, updated_at)
               VALUES (:s, :slug, :name, '', '', '', 'UTC', '{}', '{}', 'reject', 0, :stamp, :stamp)`, { s, slug: `bench-${s}`, name: `Bench ${s}`, stamp });
      await q(`INSERT INTO analysis_snapshots (id, series_id, settings, summary, status, n, created_at, updated_at) VALUES (:s, :s, '{}', '{}', 'ok', 100, :stamp, :stamp)`, { s, stamp });
      for (const k of [0, 1])
        await q(`INSERT INTO alert_rules (id, series_id, indicator, min_tau, persistence, severity, quiet_period_hours, active, level_direction, created_at, updated_at)
                 VALUES (:rule, :s, :indicator, 0.3, 1, :severity, 0, 1, 'above', :stamp, :stamp)`, { rule: 2 * s - 1 + k, s, indicator: k ? 'variance' : 'ac1', severity: k ? 'watch' : 'warning', stamp });
    }
    const BATCH = 500;
    for (let from = 0; from < ALERTS; from += BATCH) {
      const alerts: string[] = [];
      const evaluations: string[] = [];
      for (let i = from; i < from + BATCH; i++) {
        const id = i + 1;
        const s = (i % SERIES) + 1;
        const rule = 2 * s - 1 + (Math.floor(i / SERIES) % 2);
        // The last OPEN alerts are open, one per (series, rule) pair as the partial unique index demands.
        const open = i >= ALERTS - OPEN;
        const state = open ? ['new', 'acknowledged', 'escalated'][i % 3] : states[i % 2];
        const created = sqlDate(now - (ALERTS - i) * 60_000);
        const tau = ((i * 7919) % 1000) / 1000;
        alerts.push(`(${id}, ${s}, ${rule}, '${state}', '${rule % 2 ? 'warning' : 'watch'}', ${open && i % 2 ? 1 : 'NULL'}, ${s}, ${s}, 1, ${tau}, ${open ? 'NULL' : `'${created}'`}, 1, '${created}', '${created}')`);
        evaluations.push(`(${rule}, ${s}, ${s}, ${tau}, 0.001, 0.02, 1, 1, ${id}, 'opened', '${created}', '${created}')`);
      }
      await q(`INSERT INTO alerts (id, series_id, rule_id, state, severity, assignee_id, first_snapshot_id, latest_snapshot_id, evaluation_count, peak_tau, closed_at, version, created_at, updated_at) VALUES ${alerts.join(',')}`);
      await q(`INSERT OR IGNORE INTO rule_evaluations (rule_id, series_id, snapshot_id, tau, kendall_p, surrogate_p, passed, streak, alert_id, outcome, created_at, updated_at) VALUES ${evaluations.join(',')}`);
    }
  });
  await sequelize.query('ANALYZE');

  const actor = { id: 1 };
  const cases: [string, Record<string, unknown>][] = [
    ['triage, newest first', { queue: 'triage' }],
    ['escalated', { queue: 'escalated' }],
    ['assigned to me', { queue: 'mine' }],
    ['closed, newest first', { queue: 'closed' }],
    ['closed, page 400 of 25', { queue: 'closed', page: 400 }],
    ['closed, by tau', { queue: 'closed', sort: 'tau' }],
    ['closed, one series', { queue: 'closed', series: 'bench-17' }],
    ['all, warnings older than 7 d', { queue: 'all', severity: 'warning', age: '>7d' }],
  ];
  const rows: BenchRow[] = [];
  for (const [label, input] of cases) {
    const query = alertQueueSchema.parse(input);
    await fetchAlertQueue(query, actor);
    const times: number[] = [];
    for (let k = 0; k < 7; k++) {
      const t0 = performance.now();
      await fetchAlertQueue(query, actor);
      times.push(performance.now() - t0);
    }
    const ms = median(times);
    rows.push({ case: label, n: ALERTS, value: ms, unit: 'ms', target: `< ${TARGET_MS} ms`, pass: ms < TARGET_MS, note: 'page + 4 queue counts, median of 7' });
  }
  return rows;
}
