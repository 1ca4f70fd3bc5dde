import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, test } from 'vitest';
import { testDialect } from '../support/temp-db';

// A directory where the database file should be: SQLite cannot open it, as with a lost or unreadable volume. On
// PostgreSQL: a loopback port nothing listens on (port 1 needs root to bind, and no test server takes it).
const unreachable = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-no-db-'));
process.env.DATA_DIR = unreachable;
process.env.DATABASE_PATH = unreachable;
if (testDialect() === 'postgres') process.env.DATABASE_URL = 'postgres://brinkwatch@127.0.0.1:1/brinkwatch';
else delete process.env.DATABASE_URL;
const { fetchHealth } = await import('@/lib/runtime/health');
const { closeDatabase } = await import('@/models');

describe('health when the database cannot be reached', () => {
  afterAll(async () => {
    await closeDatabase(); // must return even though the handle never opened
  });

  test('reports the database and scheduler down (the route answers 503 for ok: false), with no error detail', async () => {
    const body = await fetchHealth();
    expect(body.ok).toBe(false);
    expect(body.db).toEqual({ ok: false, dialect: testDialect(), error: 'The database cannot be reached.' });
    expect(body.scheduler.ok).toBe(false);
    expect(JSON.stringify(body)).not.toContain(unreachable);
  });
});
