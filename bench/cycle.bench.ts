/**
 * The analysis cycle of a network: N series of n points with 99 surrogates each, one new point on every series, the
 * cycle's wall time recomputing each analysis in full and updating it incrementally (lib/engine/update.ts), with one
 * and with two scheduler processes sharing the cycle through the per-series leases (bench/cycle-child.ts, each one
 * runAnalysisCycle on the same database). Target of issue 18: 10,000 series × 10,000 points, incremental at least 10×
 * faster than full. The full size is 1e8 observations and, in full, about 10,000 core-seconds per cycle, beyond a
 * bench on a 2-core machine shared with other work: this bench runs CYCLE_SERIES series (default 16) of 10,000 points
 * and prints the 10,000-series figures as an EXTRAPOLATION (linear in the series count, which is what one lease per
 * series and no shared state between series make it), marked so in the table.
 */
import { spawn } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { BenchRow } from './index';

export const title = 'analysis cycle';

const SERIES = Number(process.env.CYCLE_SERIES ?? 16);
const POINTS = 10_000;
const TARGET_SERIES = 10_000;
const DAY = 86_400_000;
const T0 = Date.UTC(1995, 0, 1);
/** Settings an update can continue (extents in points, a smoother of bounded reach): the series' own analysis. */
const SETTINGS = { detrend: 'gaussian', bandwidth: '100 points', window: '1000 points', surrogates: 99 };

interface ChildResult {
  analysed: number;
  incremental: number;
  ms: number;
}

/** Runs one cycle in `processes` scheduler processes started together; the wall time is from "go" to the last answer. */
async function cycle(dataDir: string, processes: number, env: Record<string, string>): Promise<{ ms: number; analysed: number; incremental: number }> {
  const children = Array.from({ length: processes }, () =>
    spawn(process.execPath, ['--import', 'tsx', path.join(__dirname, 'cycle-child.ts')], {
      env: { ...process.env, DATA_DIR: dataDir, DATABASE_PATH: '', ANALYSIS_CONCURRENCY: '1', ...env },
      stdio: ['pipe', 'pipe', 'pipe'],
    }),
  );
  const outputs = children.map((child) => {
    let out = '';
    let err = '';
    child.stdout.on('data', (d) => (out += d));
    child.stderr.on('data', (d) => (err += d));
    const ready = new Promise<void>((resolve) => {
      const check = () => (out.includes('ready') ? resolve() : child.stdout.once('data', check));
      check();
    });
    const done = new Promise<ChildResult>((resolve, reject) =>
      child.once('exit', (code) => {
        const line = out.split('\n').find((l) => l.startsWith('{'));
        if (code !== 0 || !line) reject(new Error(`cycle bench child failed (${code}):\n${err}`));
        else resolve(JSON.parse(line) as ChildResult);
      }),
    );
    return { ready, done };
  });
  await Promise.all(outputs.map((o) => o.ready));
  const t0 = performance.now();
  for (const child of children) child.stdin.end('go\n');
  const results = await Promise.all(outputs.map((o) => o.done));
  return {
    ms: performance.now() - t0,
    analysed: results.reduce((a, r) => a + r.analysed, 0),
    incremental: results.reduce((a, r) => a + r.incremental, 0),
  };
}

export async function run(): Promise<BenchRow[]> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-bench-cycle-'));
  process.env.DATA_DIR = dataDir;
  delete process.env.DATABASE_PATH;
  const { migrateUp } = await import('@/migrations');
  const { Observation, Series, closeDatabase, db } = await import('@/models');
  const { RandomStream } = await import('@/lib/engine/random');
  await db();
  await migrateUp();
  let appended = 0;
  const ids: number[] = [];
  for (let s = 0; s < SERIES; s++) {
    const series = await Series.create({
      slug: `cycle-${s}`,
      name: `Cycle ${s}`,
      csvMapping: { timeColumn: 0, valueColumn: 1, timeFormat: 'iso8601' },
      settings: SETTINGS,
      intervalMs: DAY,
      dataChangedAt: null,
      retiredAt: null,
    });
    ids.push(series.id);
    // AR(1) about a slow drift, its own seeded stream per series.
    const rng = new RandomStream(7, s);
    const rows: { seriesId: number; t: number; value: number }[] = [];
    let x = 0;
    for (let i = 0; i < POINTS; i++) {
      x = 0.6 * x + rng.normal();
      rows.push({ seriesId: series.id, t: T0 + i * DAY, value: 10 + i / POINTS + x });
    }
    for (let k = 0; k < rows.length; k += 2000) await Observation.bulkCreate(rows.slice(k, k + 2000));
  }
  /** One new point on every series, marked for analysis as the intake marks it. */
  const newPoint = async () => {
    const rng = new RandomStream(8, appended);
    for (const id of ids) await Observation.create({ seriesId: id, t: T0 + (POINTS + appended) * DAY, value: 10 + rng.normal() });
    appended++;
    await Series.update({ needsAnalysis: true, dataChangedAt: new Date() }, { where: { id: ids } });
  };
  await closeDatabase();

  const rows: BenchRow[] = [];
  const measured: Record<string, number> = {};
  const note = `${SERIES} series × ${POINTS.toLocaleString('en-GB')} points, 99 surrogates, 1 new point each`;
  const reopen = async (work: () => Promise<void>) => {
    await db();
    await work();
    await closeDatabase();
  };
  // Prime: the first cycle is full for every series and keeps their states.
  await reopen(newPoint);
  await cycle(dataDir, 2, {});
  for (const processes of [1, 2]) {
    await reopen(newPoint);
    const incremental = await cycle(dataDir, processes, {});
    // Full: surrogates redrawn at every new point (ANALYSIS_NULL_REFRESH_POINTS=1) is a full recomputation that, like
    // every full one in production, leaves the state for the next update.
    await reopen(newPoint);
    const full = await cycle(dataDir, processes, { ANALYSIS_NULL_REFRESH_POINTS: '1' });
    if (full.analysed !== SERIES || incremental.analysed !== SERIES)
      throw new Error(`a cycle analysed ${full.analysed} / ${incremental.analysed} of ${SERIES} series`);
    if (full.incremental !== 0) throw new Error('a full cycle updated a series incrementally');
    measured[`full${processes}`] = full.ms;
    measured[`incremental${processes}`] = incremental.ms;
    const who = `${processes} scheduler process${processes > 1 ? 'es' : ''}`;
    rows.push({ case: `full cycle, ${who}`, n: SERIES, value: full.ms, unit: 'ms', note });
    rows.push({
      case: `incremental cycle, ${who}`,
      n: SERIES,
      value: incremental.ms,
      unit: 'ms',
      note: `${note}; ${incremental.incremental} of ${SERIES} updated incrementally`,
    });
    const speedUp = full.ms / incremental.ms;
    rows.push({
      case: `incremental speed-up, ${who}`,
      n: SERIES,
      value: speedUp,
      unit: '×',
      target: '≥ 10×',
      pass: speedUp >= 10,
      note: 'full ÷ incremental wall time',
    });
  }
  rows.push({
    case: 'full cycle, 2 processes vs 1',
    n: SERIES,
    value: measured.full1 / measured.full2,
    unit: '×',
    note: 'speed-up of the second scheduler process',
  });
  rows.push({
    case: 'incremental cycle, 2 processes vs 1',
    n: SERIES,
    value: measured.incremental1 / measured.incremental2,
    unit: '×',
    note: 'speed-up of the second scheduler process',
  });
  // Surrogates are redrawn every ANALYSIS_NULL_REFRESH_POINTS (100) new points: one full analysis per 100 cycles.
  const amortised = (99 * measured.incremental2 + measured.full2) / 100;
  rows.push({
    case: 'incremental cycle with its surrogate redraws, 2 processes',
    n: SERIES,
    value: amortised,
    unit: 'ms',
    note: '(99 incremental + 1 full) / 100: the null is redrawn every 100 new points',
  });
  const scale = TARGET_SERIES / SERIES;
  for (const [key, words] of [
    ['full2', 'full cycle'],
    ['incremental2', 'incremental cycle'],
  ] as const) {
    rows.push({
      case: `EXTRAPOLATED ${words}, 2 processes`,
      n: TARGET_SERIES,
      value: (measured[key] * scale) / 1000,
      unit: 's',
      note: `NOT MEASURED: ${SERIES}-series time × ${scale.toFixed(0)} (linear in series)`,
    });
  }
  return rows;
}
