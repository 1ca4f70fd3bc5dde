import { spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { QueryTypes } from 'sequelize';
import { beforeAll, describe, expect, it } from 'vitest';
import { testDialect, useTempDataDir } from '../support/temp-db';

const dataDir = useTempDataDir('bw-crash-');

const { migrateUp } = await import('@/migrations');
const { IngestRun, db } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { sweepStaleRuns } = await import('@/lib/intake/pipeline');
const { observationExtent } = await import('@/lib/analysis/observations');

const ROOT = path.resolve(__dirname, '../..');
const ROWS = 300_000;

function child() {
  return spawn(process.execPath, ['--import', 'tsx', path.join(__dirname, 'crash-child.ts')], {
    cwd: ROOT,
    env: { ...process.env, DATA_DIR: dataDir, DATABASE_PATH: '' },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
}

async function runToEnd(): Promise<string> {
  const proc = child();
  let out = '';
  proc.stdout.on('data', (d) => (out += d));
  proc.stderr.on('data', (d) => (out += d));
  const code = await new Promise((resolve) => proc.on('exit', resolve));
  expect(code, out).toBe(0);
  return out;
}

let seriesId = 0;
const folder = path.join(dataDir, 'drops', 'deep-core');

beforeAll(async () => {
  await migrateUp();
  seriesId = (await createSeries({ slug: 'deep-core', name: 'Deep core' }, null)).id;
  fs.mkdirSync(folder, { recursive: true });
  const start = Date.UTC(2000, 0, 1);
  const lines = ['time,value'];
  for (let i = 0; i < ROWS; i++) lines.push(`${new Date(start + i * 60_000).toISOString()},${(i % 997) / 10}`);
  fs.writeFileSync(path.join(folder, 'big.csv'), `${lines.join('\n')}\n`);
});

describe('a crash in the middle of a large drop file', () => {
  it('leaves nothing half-written, and the next pass stores every row exactly once', async () => {
    await db();
    const proc = child();
    let out = '';
    proc.stdout.on('data', (d) => (out += d));
    proc.stderr.on('data', (d) => (out += d));
    const exited = new Promise((resolve) => proc.on('exit', resolve));
    // Kill once the run exists and the write transaction has begun: on SQLite when it spills pages into the WAL, on
    // PostgreSQL when another connection of this database is inside the observations' INSERTs.
    const wal = path.join(dataDir, 'brinkwatch.sqlite-wal');
    const baseline = fs.existsSync(wal) ? fs.statSync(wal).size : 0;
    const writing = async () => {
      if (testDialect() === 'sqlite') return (fs.existsSync(wal) ? fs.statSync(wal).size : 0) > baseline + 2 * 1024 * 1024;
      const inserts = await (
        await db()
      ).query(
        "SELECT 1 FROM pg_stat_activity WHERE datname = current_database() AND pid <> pg_backend_pid() AND xact_start IS NOT NULL AND query LIKE 'INSERT INTO observations %'",
        { type: QueryTypes.SELECT },
      );
      return inserts.length > 0;
    };
    const deadline = Date.now() + 60_000;
    for (;;) {
      const running = await IngestRun.count({ where: { status: 'running' } });
      if (running === 1 && (await writing())) break;
      if (proc.exitCode !== null || Date.now() > deadline) throw new Error(`the child finished before it could be killed:\n${out}`);
      await new Promise((r) => setTimeout(r, 20));
    }
    proc.kill('SIGKILL');
    await exited;

    expect((await observationExtent(seriesId)).count).toBe(0);
    expect(fs.existsSync(path.join(folder, 'big.csv'))).toBe(true);
    const [dead] = await IngestRun.findAll({ where: { status: 'running' } });
    expect(dead).toBeDefined();

    // The dead process's file lease would lapse after its TTL; fast-forward that instead of waiting for it.
    const sequelize = await db();
    expect(await sequelize.query("SELECT name FROM leases WHERE name = 'ingest:deep-core/big.csv'", { type: QueryTypes.SELECT })).toHaveLength(1);
    await sequelize.query("UPDATE leases SET expires_at = 0 WHERE name = 'ingest:deep-core/big.csv'");
    const second = await runToEnd();
    expect(second).toContain('"status":"succeeded"');
    const extent = await observationExtent(seriesId);
    expect(extent.count).toBe(ROWS);
    expect(extent.first).toBe(Date.UTC(2000, 0, 1));
    expect(extent.last).toBe(Date.UTC(2000, 0, 1) + (ROWS - 1) * 60_000);
    expect(fs.existsSync(path.join(folder, 'processed', 'big.csv'))).toBe(true);
    const report = JSON.parse(fs.readFileSync(path.join(folder, 'processed', 'big.csv.report.json'), 'utf8'));
    expect(report).toMatchObject({ status: 'succeeded', accepted: ROWS, rejected: 0 });

    // The dead run's lease lapses after 30 s; looking past that, the sweep marks it failed.
    expect(await sweepStaleRuns(Date.now() + 31_000)).toEqual([dead.id]);
    await dead.reload();
    expect(dead.status).toBe('failed');
    const succeeded = await IngestRun.findAll({ where: { status: 'succeeded' } });
    expect(succeeded).toHaveLength(1);

    // Dropping the same file again is recognised by its content and not applied a second time.
    fs.copyFileSync(path.join(folder, 'processed', 'big.csv'), path.join(folder, 'big-again.csv'));
    expect(await runToEnd()).toContain('"status":"succeeded"');
    expect((await observationExtent(seriesId)).count).toBe(ROWS);
    const again = JSON.parse(fs.readFileSync(path.join(folder, 'processed', 'big-again.csv.report.json'), 'utf8'));
    expect(again).toMatchObject({ alreadyApplied: true, previousRunId: succeeded[0].id, accepted: 0 });
  }, 180_000);
});
