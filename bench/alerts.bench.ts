/**
 * Alert queues at portfolio scale: 500 series, 1,000 rules, 50,000 alerts (1,000 open) with their timeline events
 * (bench/portfolio.ts). Target: every queue page (with its four counts) < 200 ms.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { BenchRow } from './index';
import { generatePortfolio, median, portfolioSlug, type PortfolioShape } from './portfolio';

export const title = 'alert queues';

/** 500 series × 2 rules × 50 alerts = 50,000 alerts, the newest of each rule open (1,000). */
const SHAPE: PortfolioShape = { series: 500, observationsPerSeries: 60, rulesPerSeries: 2, snapshotsPerSeries: 1, alertsPerRule: 50 };
const ALERTS = SHAPE.series * SHAPE.rulesPerSeries * SHAPE.alertsPerRule;
const TARGET_MS = 200;

export async function run(): Promise<BenchRow[]> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-bench-alerts-'));
  await generatePortfolio(dataDir, 'bench-password', SHAPE);
  const { db } = await import('@/models');
  const { fetchAlertQueue } = await import('@/lib/alerts/queries');
  const { alertQueueSchema } = await import('@/lib/schemas/alert');
  const sequelize = await db();
  const [analyst] = await sequelize.query<{ id: number }>("SELECT id FROM users WHERE role = 'analyst'", { type: 'SELECT' as never });

  const actor = { id: analyst.id };
  const cases: [string, Record<string, unknown>][] = [
    ['triage, newest first', { queue: 'triage' }],
    ['escalated', { queue: 'escalated' }],
    ['assigned to me', { queue: 'mine' }],
    ['closed, newest first', { queue: 'closed' }],
    ['closed, page 400 of 25', { queue: 'closed', page: 400 }],
    ['closed, by tau', { queue: 'closed', sort: 'tau' }],
    ['closed, one series', { queue: 'closed', series: portfolioSlug(16, SHAPE.series) }],
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
