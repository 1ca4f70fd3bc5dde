/**
 * Period reports and the freshness pass at portfolio scale: 500 series with 400 daily observations each, 1,000 rules
 * and 25,000 alerts with their timelines (bench/portfolio.ts). Targets (ours): a network period report < 1.5 s, one
 * site's < 1 s, a freshness pass over every series < 1 s.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { BenchRow } from './index';
import { generatePortfolio, median, type PortfolioShape } from './portfolio';

export const title = 'period reports';

const SHAPE: PortfolioShape = { series: 500, observationsPerSeries: 400, rulesPerSeries: 2, snapshotsPerSeries: 1, alertsPerRule: 25 };

async function timed(runs: number, work: () => Promise<unknown>): Promise<number> {
  await work();
  const times: number[] = [];
  for (let k = 0; k < runs; k++) {
    const t0 = performance.now();
    await work();
    times.push(performance.now() - t0);
  }
  return median(times);
}

export async function run(): Promise<BenchRow[]> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-bench-reports-'));
  await generatePortfolio(dataDir, 'bench-password', SHAPE);
  const { db } = await import('@/models');
  const { buildPeriodReport } = await import('@/lib/reports/period');
  const { checkFreshness } = await import('@/lib/alerts/lateness');
  const { periodContaining } = await import('@/lib/reports/period-shape');
  const sequelize = await db();
  const [site] = await sequelize.query<{ site: string }>("SELECT site FROM series WHERE site <> '' LIMIT 1", { type: 'SELECT' as never });
  const now = Date.now();
  const year = periodContaining('year', now);
  const quarter = periodContaining('quarter', now);
  const rows: BenchRow[] = [];
  const network = await timed(3, () => buildPeriodReport(year, null, now));
  rows.push({ case: 'network report, this year', n: SHAPE.series, value: network, unit: 'ms', target: '< 1500 ms', pass: network < 1500, note: 'median of 3' });
  const quarterly = await timed(3, () => buildPeriodReport(quarter, null, now));
  rows.push({
    case: 'network report, this quarter',
    n: SHAPE.series,
    value: quarterly,
    unit: 'ms',
    target: '< 1500 ms',
    pass: quarterly < 1500,
    note: 'median of 3',
  });
  if (site) {
    const one = await timed(3, () => buildPeriodReport(year, site.site, now));
    rows.push({ case: 'one site, this year', n: SHAPE.series, value: one, unit: 'ms', target: '< 1000 ms', pass: one < 1000, note: 'median of 3' });
  }
  // Every series fresh (the portfolio ends today): the pass reads and decides, it writes nothing.
  const pass = await timed(5, () => checkFreshness(now));
  rows.push({ case: 'freshness pass, nothing late', n: SHAPE.series, value: pass, unit: 'ms', target: '< 1000 ms', pass: pass < 1000, note: 'median of 5' });
  return rows;
}
