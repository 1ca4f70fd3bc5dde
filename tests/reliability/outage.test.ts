import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { RawDb } from './sqlite';
import { WRITE_LOCK_KEY } from '@/models/db';

const BUSY_TIMEOUT_MS = 200;

/**
 * Holds the write lock from a separate connection (as a long-running maintenance job would) for `ms`: SQLite's
 * own, or on PostgreSQL the advisory lock every write transaction of the product queues on (models/db.ts).
 */
async function holdWriteLock(dataDir: string, ms: number): Promise<{ released: Promise<void> }> {
  const locker = await RawDb.forDataDir(dataDir);
  await locker.exec(locker.dialect === 'postgres' ? `SELECT pg_advisory_lock(${WRITE_LOCK_KEY})` : 'BEGIN EXCLUSIVE');
  const released = (async () => {
    await new Promise((r) => setTimeout(r, ms));
    await locker.exec(locker.dialect === 'postgres' ? `SELECT pg_advisory_unlock(${WRITE_LOCK_KEY})` : 'COMMIT');
    await locker.close();
  })();
  return { released };
}

describe('the database locked by another process', () => {
  let app: RunningApp;
  let lead: Session;
  beforeAll(async () => {
    app = await startApp({ demo: false, scheduler: false, env: { DB_BUSY_TIMEOUT_MS: String(BUSY_TIMEOUT_MS) } });
    lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
  });
  afterAll(async () => {
    await app?.stop();
  });

  test('a lock longer than the busy timeout and its retries: writes answer a clear 503, reads go on, nothing half-written, then it recovers', async () => {
    const { released } = await holdWriteLock(app.dataDir, 8000);
    const started = Date.now();
    const write = await lead.json('/api/series', 'POST', { slug: 'written-during-lock', name: 'Written during the lock' });
    const waited = Date.now() - started;
    expect(write.status).toBe(503);
    expect(await write.json()).toEqual({ error: { code: 'unavailable', message: expect.stringMatching(/busy/i) } });
    // It waited for the lock (busy timeout, then the retries) rather than failing at once.
    expect(waited).toBeGreaterThanOrEqual(BUSY_TIMEOUT_MS);

    // WAL mode: readers are not blocked by a writer, so the screens keep working during the lock.
    const read = await lead.fetch('/api/series');
    expect(read.status).toBe(200);
    const health = await fetch(`${app.baseUrl}/api/health`);
    expect(health.status).toBe(200);

    await released;
    expect(app.process.exitCode).toBeNull();
    const probe = await RawDb.forDataDir(app.dataDir);
    expect(await probe.count('series', 'slug = ?', ['written-during-lock'])).toBe(0);
    expect(await probe.count('audit_log', "action = 'series.create'")).toBe(0);
    await probe.close();

    const after = await lead.json('/api/series', 'POST', { slug: 'written-during-lock', name: 'Written during the lock' });
    expect(after.status).toBe(201);
    expect(app.output()).not.toMatch(/unhandled error/);
  });

  test('a lock shorter than busy timeout plus retries is waited out: the write succeeds', async () => {
    const { released } = await holdWriteLock(app.dataDir, 600);
    const write = await lead.json('/api/series', 'POST', { slug: 'written-after-short-lock', name: 'Written after a short lock' });
    await released;
    expect(write.status).toBe(201);
  });
});
