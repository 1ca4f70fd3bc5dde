import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { RawDb } from './sqlite';
import { dailyCsv, sinkMessages, startScheduler, stopScheduler, waitFor, type SchedulerProcess } from './scheduler';

const BIG_ROWS = 250_000;

/**
 * kill -9 of the real scheduler process (jobs/scheduler.ts) in the middle of its work. A dead holder's lease lapses
 * after its TTL (a minute for a file, ten for an analysis); the test moves the expiry into the past instead of
 * waiting, exactly what the clock would do.
 */
describe('the scheduler killed with SIGKILL mid-work', () => {
  let app: RunningApp;
  let raw: RawDb;
  let lead: Session;
  const live: SchedulerProcess[] = [];

  const spawnScheduler = () => {
    const scheduler = startScheduler(app);
    live.push(scheduler);
    return scheduler;
  };
  const kill9 = async (scheduler: SchedulerProcess) => {
    scheduler.process.kill('SIGKILL');
    await scheduler.exited;
    expect(scheduler.process.signalCode).toBe('SIGKILL');
  };
  const expireLeases = (like: string) => raw.exec(`UPDATE leases SET expires_at = 0 WHERE name LIKE '${like}'`);

  beforeAll(async () => {
    app = await startApp({ demo: false, scheduler: false });
    lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    raw = await RawDb.forDataDir(app.dataDir);
  });
  afterAll(async () => {
    await Promise.all(live.map(stopScheduler));
    await raw?.close();
    await app?.stop();
  });

  test('during a large drop-folder intake: nothing half-stored, and after restart every row exactly once', async () => {
    const slug = 'crash-intake';
    expect((await lead.json('/api/series', 'POST', { slug, name: 'Crash intake', intervalMs: 60_000 })).status).toBe(201);
    const folder = path.join(app.dataDir, 'drops', slug);
    fs.mkdirSync(folder, { recursive: true });
    const lines = ['time,value'];
    const start = Date.UTC(2001, 0, 1);
    for (let i = 0; i < BIG_ROWS; i++) lines.push(`${new Date(start + i * 60_000).toISOString()},${((i * 7919) % 1000) / 100}`);
    fs.writeFileSync(path.join(folder, 'big.csv.part'), `${lines.join('\n')}\n`);
    fs.renameSync(path.join(folder, 'big.csv.part'), path.join(folder, 'big.csv'));
    const [{ id: seriesId }] = await raw.all<{ id: number }>('SELECT id FROM series WHERE slug = ?', [slug]);

    const first = spawnScheduler();
    await waitFor('the intake to be under way', () => raw.count('ingest_runs', "status = 'running' AND file_name = 'big.csv'"), 60_000);
    await new Promise((r) => setTimeout(r, 300));
    await kill9(first);

    const stored = await raw.count('observations', 'series_id = ?', [seriesId]);
    const finished = await raw.count('ingest_runs', "status = 'succeeded' AND file_name = 'big.csv'");
    // Atomic: either the whole file committed just before the kill, or none of it.
    expect([0, BIG_ROWS]).toContain(stored);
    expect(finished).toBe(stored === 0 ? 0 : 1);

    await expireLeases('ingest:%');
    const second = spawnScheduler();
    await waitFor('the file to be finished', async () => fs.existsSync(path.join(folder, 'processed', 'big.csv')), 120_000);
    expect(await raw.count('observations', 'series_id = ?', [seriesId])).toBe(BIG_ROWS);
    const runs = await raw.all<{ status: string; accepted: number }>("SELECT status, accepted FROM ingest_runs WHERE file_name = 'big.csv' ORDER BY id");
    expect(runs.filter((r) => r.status === 'succeeded')).toEqual([expect.objectContaining({ accepted: BIG_ROWS })]);
    // The run the dead process left is not left 'running' for ever.
    await waitFor('the dead run to be closed', async () => (await raw.count('ingest_runs', "status = 'running'")) === 0, 30_000);
    expect(fs.existsSync(path.join(folder, 'big.csv'))).toBe(false);
    await stopScheduler(second);
  });

  test('during an analysis run: after restart one snapshot, one alert, one e-mail — and a further crash sends nothing twice', async () => {
    const slug = 'crash-analysis';
    // Surrogates make the run long enough to be caught in the middle (lib/engine/surrogates.ts).
    expect((await lead.json('/api/series', 'POST', { slug, name: 'Crash analysis', intervalMs: 86_400_000, settings: { surrogates: 3000 } })).status).toBe(201);
    expect((await lead.json(`/api/series/${slug}/rules`, 'POST', { indicator: 'variance', minTau: -1, persistence: 1, severity: 'warning' })).status).toBe(201);
    const analyst = await signedIn(app.baseUrl, 'analyst@brinkwatch.test', DEMO_PASSWORD);
    expect((await analyst.json(`/api/series/${slug}/watch`, 'PUT', { mode: 'immediate' })).status).toBe(200);
    const pushed = await lead.fetch(`/api/series/${slug}/observations`, {
      method: 'POST',
      headers: { 'content-type': 'text/csv' },
      body: dailyCsv(18_000, 2_000, 11),
    });
    expect(pushed.status, await pushed.clone().text()).toBe(200);
    const [{ id: seriesId }] = await raw.all<{ id: number }>('SELECT id FROM series WHERE slug = ?', [slug]);
    const mailsBefore = sinkMessages(app).length;

    const first = spawnScheduler();
    await waitFor('the analysis to be under way', () => raw.count('leases', 'name = ?', [`analysis:${seriesId}`]), 60_000);
    await new Promise((r) => setTimeout(r, 200));
    const snapshotsAtKill = await raw.count('analysis_snapshots', 'series_id = ?', [seriesId]);
    await kill9(first);
    expect(snapshotsAtKill, 'the analysis finished before it could be interrupted').toBe(0);
    expect(await raw.count('analysis_snapshots', 'series_id = ?', [seriesId])).toBe(0);
    expect(await raw.count('alerts', 'series_id = ?', [seriesId])).toBe(0);
    // The work is still owed: the series stays marked.
    // A boolean column: 1 on SQLite, true on PostgreSQL.
    expect(Boolean((await raw.get<{ needs_analysis: unknown }>('SELECT needs_analysis FROM series WHERE id = ?', [seriesId]))!.needs_analysis)).toBe(true);

    await expireLeases('analysis:%');
    const second = spawnScheduler();
    await waitFor('the alert to be mailed', async () => (await raw.count('mail_outbox', "kind = 'alert-new' AND status = 'sent'")) === 1, 120_000);
    await kill9(second);

    const third = spawnScheduler();
    await new Promise((r) => setTimeout(r, 4000)); // several cycles of every job
    await stopScheduler(third);
    const snapshots = await raw.all<{ id: number }>('SELECT id FROM analysis_snapshots WHERE series_id = ?', [seriesId]);
    expect(snapshots).toHaveLength(1);
    expect(await raw.count('rule_evaluations', 'snapshot_id = ?', [snapshots[0].id])).toBe(1);
    expect(await raw.count('alerts', 'series_id = ?', [seriesId])).toBe(1);
    expect(await raw.count('alert_events', "action = 'open' AND alert_id IN (SELECT id FROM alerts WHERE series_id = ?)", [seriesId])).toBe(1);
    expect(await raw.count('mail_outbox', "kind = 'alert-new'")).toBe(1);
    const delivered = sinkMessages(app);
    expect(delivered.length - mailsBefore).toBe(1);
    expect(delivered.length).toBe(await raw.count('mail_outbox', "status = 'sent'"));
    expect(new Set(delivered.map((m) => m.messageId)).size).toBe(delivered.length);
  });
});
