import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { testDialect, useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-read-cache-');

const { migrateUp } = await import('@/migrations');
const { AppState, closeDatabase, db } = await import('@/models');
const { databasePath } = await import('@/lib/runtime/config');
const { cachedRead } = await import('@/lib/db/read-cache');

beforeAll(async () => {
  await migrateUp();
});
afterAll(async () => {
  await closeDatabase();
});

/** A read of the one app_state row the tests change, counting how often it really ran. */
function counter() {
  let loads = 0;
  const read = () =>
    cachedRead('probe-value', async () => {
      loads++;
      return (await AppState.findByPk('probe'))?.value ?? null;
    });
  return { read, loads: () => loads };
}

// SQLite: PRAGMA data_version (https://sqlite.org/pragma.html#pragma_data_version); PostgreSQL: pg_current_snapshot()
// (https://www.postgresql.org/docs/current/functions-info.html#FUNCTIONS-PG-SNAPSHOT).
describe(`read cache checked against the database's change marker (${testDialect()})`, () => {
  it('answers from memory while nothing is committed and reads again after a commit on this process', async () => {
    await db();
    await AppState.upsert({ key: 'probe', value: 'one', updatedAt: new Date() });
    const { read, loads } = counter();
    expect(await read()).toBe('one');
    expect(await read()).toBe('one');
    expect(loads()).toBe(1);
    await AppState.upsert({ key: 'probe', value: 'two', updatedAt: new Date() });
    expect(await read()).toBe('two');
    expect(loads()).toBe(2);
  });

  it('sees a commit made by another process on the same database', async () => {
    const { read, loads } = counter();
    const before = await read();
    const baseline = loads();
    // A separate OS process writes with the driver directly, as the scheduler or another web node would.
    const update = "UPDATE app_state SET value='from-elsewhere' WHERE key='probe'";
    const script =
      testDialect() === 'postgres'
        ? `const {Client}=require('pg');const c=new Client(${JSON.stringify(process.env.DATABASE_URL)});` +
          `c.connect().then(()=>c.query(${JSON.stringify(update)})).then(()=>c.end(),(e)=>{console.error(e);process.exit(1);});`
        : `const s=require('sqlite3');const d=new s.Database(${JSON.stringify(databasePath())});d.configure('busyTimeout',5000);` +
          `d.run(${JSON.stringify(update)},(e)=>{if(e)throw e;d.close();});`;
    const result = spawnSync(process.execPath, ['-e', script], { cwd: path.resolve(__dirname, '../..'), encoding: 'utf8' });
    expect(result.status, result.stderr).toBe(0);
    expect(before).not.toBe('from-elsewhere');
    expect(await read()).toBe('from-elsewhere');
    expect(loads()).toBe(baseline + 1);
  });

  it('shares one load between concurrent misses and does not keep a failure', async () => {
    // Two misses share a load when they see the same change marker. PostgreSQL's marker is the whole server's
    // snapshot, so other databases on a shared test server (other test files) may move it between the two probes:
    // a few fresh keys are tried, and sharing must show on at least one (without it every try loads twice).
    const shared: boolean[] = [];
    for (let attempt = 0; attempt < 5 && !shared.includes(true); attempt++) {
      let calls = 0;
      const slow = () =>
        cachedRead(`shared-${attempt}`, async () => {
          calls++;
          await new Promise((r) => setTimeout(r, 20));
          return { calls };
        });
      const [a, b] = await Promise.all([slow(), slow()]);
      shared.push(a === b && calls === 1);
    }
    expect(shared).toContain(true);

    let attempts = 0;
    const flaky = () =>
      cachedRead('flaky', async () => {
        attempts++;
        if (attempts === 1) throw new Error('first attempt fails');
        return 'ok';
      });
    await expect(flaky()).rejects.toThrow('first attempt fails');
    expect(await flaky()).toBe('ok');
  });
});
