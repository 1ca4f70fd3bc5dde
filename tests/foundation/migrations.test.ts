import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { testDialect, useTempDataDir } from '../support/temp-db';

useTempDataDir();
const { migrateDown, migrateUp, pendingMigrations } = await import('@/migrations');
const { db, closeDatabase } = await import('@/models');

async function tableNames(): Promise<string[]> {
  const sequelize = await db();
  const rows = (await sequelize.getQueryInterface().showAllTables()) as string[];
  return rows.filter((name) => name !== 'schema_migrations' && name !== 'sqlite_sequence').sort();
}

describe('migrations', () => {
  beforeAll(async () => {
    await db();
  });
  afterAll(async () => {
    await closeDatabase();
  });

  // In the PostgreSQL project (vitest.config.mts) this runs on a fresh PostgreSQL database, the dialect branches of
  // the migrations (0007's in-place ALTER instead of SQLite's table rebuild) included.
  test('run up, down and up again, leaving the same schema', async () => {
    const applied = await migrateUp();
    expect(applied.length).toBeGreaterThan(0);
    expect(await pendingMigrations()).toEqual([]);
    const first = await tableNames();
    for (const table of [
      'users',
      'series',
      'observations',
      'ingest_runs',
      'analysis_snapshots',
      'alert_rules',
      'alerts',
      'alert_events',
      'notes',
      'ingest_tokens',
      'mail_outbox',
      'audit_log',
    ]) {
      expect(first).toContain(table);
    }
    expect(await migrateUp()).toEqual([]); // idempotent at every start

    const reverted = await migrateDown();
    expect(reverted).toEqual([...applied].reverse());
    expect(await tableNames()).toEqual([]);

    await migrateUp();
    expect(await tableNames()).toEqual(first);
  });

  test.runIf(testDialect() === 'sqlite')('the database runs in WAL mode with a busy timeout', async () => {
    const sequelize = await db();
    const [rows] = await sequelize.query('PRAGMA journal_mode');
    expect((rows as { journal_mode: string }[])[0].journal_mode).toBe('wal');
  });
});
