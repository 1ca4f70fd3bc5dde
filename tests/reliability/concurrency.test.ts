import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn } from '../support/session';
import { RawDb } from './sqlite';
import { dailyCsv, sinkMessages, startScheduler, stopScheduler, waitFor, type SchedulerProcess } from './scheduler';

const SERIES = ['twin-a', 'twin-b', 'twin-c', 'twin-d'];
const FILES_PER_SERIES = 3;
const ROWS_PER_FILE = 400;
const FIRST_DAY = 19_000; // 2022-01-08

describe('two schedulers started at once on one DATA_DIR', () => {
  let app: RunningApp;
  let raw: RawDb;
  const schedulers: SchedulerProcess[] = [];

  beforeAll(async () => {
    app = await startApp({ demo: false, scheduler: false });
    const [lead, analyst] = await Promise.all([
      signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD),
      signedIn(app.baseUrl, 'analyst@brinkwatch.test', DEMO_PASSWORD),
    ]);
    for (const slug of SERIES) {
      expect((await lead.json('/api/series', 'POST', { slug, name: `Twin ${slug}`, intervalMs: 86_400_000 })).status).toBe(201);
      // tau ≥ −1 holds for any computed trend: every analysis passes, so the first one opens an alert and mails.
      expect((await lead.json(`/api/series/${slug}/rules`, 'POST', { indicator: 'variance', minTau: -1, persistence: 1, severity: 'watch' })).status).toBe(201);
      expect((await analyst.json(`/api/series/${slug}/watch`, 'PUT', { mode: 'immediate' })).status).toBe(200);
      const folder = path.join(app.dataDir, 'drops', slug);
      fs.mkdirSync(folder, { recursive: true });
      for (let f = 0; f < FILES_PER_SERIES; f++) {
        const file = path.join(folder, `part-${f}.csv`);
        // Written beside and renamed in, as the drop-folder contract asks, so neither scheduler sees half a file.
        fs.writeFileSync(`${file}.part`, dailyCsv(FIRST_DAY + f * ROWS_PER_FILE, ROWS_PER_FILE, 7 + f));
        fs.renameSync(`${file}.part`, file);
      }
    }
    raw = await RawDb.forDataDir(app.dataDir);
  });
  afterAll(async () => {
    await Promise.all(schedulers.map(stopScheduler));
    await raw?.close();
    await app?.stop();
  });

  test('each file is taken in once, each snapshot judged once per rule, each alert opened and mailed once', async () => {
    schedulers.push(startScheduler(app), startScheduler(app));
    const total = SERIES.length * FILES_PER_SERIES * ROWS_PER_FILE;
    await waitFor(
      'every file taken in',
      async () => (await raw.count('observations')) === total && (await raw.count('ingest_runs', "status = 'succeeded'")) === SERIES.length * FILES_PER_SERIES,
      90_000,
    );
    // Settled: nothing due, nothing unsent, and every stored snapshot judged by its rule (a snapshot is written, and
    // its flag cleared, before the cycle judges it at its end, so a loaded machine shows that gap for a while).
    const unjudgedSql = `SELECT a.id FROM analysis_snapshots a JOIN alert_rules r ON r.series_id = a.series_id
                         LEFT JOIN rule_evaluations e ON e.snapshot_id = a.id AND e.rule_id = r.id
                         WHERE a.status = 'ok' GROUP BY a.id, r.id HAVING COUNT(e.id) <> 1`;
    await waitFor(
      'analysis, judgement and mail to settle',
      async () => {
        const pending = await raw.count('series', 'needs_analysis');
        const unsent = await raw.count('mail_outbox', "status <> 'sent'");
        const alerts = await raw.count('alerts');
        const unjudged = await raw.all(unjudgedSql);
        return pending === 0 && unsent === 0 && alerts === SERIES.length && unjudged.length === 0;
      },
      90_000,
    );
    // A few more cycles of both: nothing new may appear.
    const settled = await raw.tableCounts(['leases', 'app_state', 'audit_log']);
    await new Promise((r) => setTimeout(r, 4000));
    expect(await raw.tableCounts(['leases', 'app_state', 'audit_log'])).toEqual(settled);

    for (const s of schedulers) expect(s.process.exitCode, s.output()).toBeNull();
    // Both did work: each logged a start and shares the load under its own holder name.
    for (const s of schedulers) expect(s.output()).toMatch(/started .*ingest/);

    const runsPerFile = await raw.all<{ slug: string; file_name: string; runs: number; accepted: number }>(
      `SELECT s.slug, r.file_name, COUNT(*) AS runs, SUM(r.accepted) AS accepted FROM ingest_runs r JOIN series s ON s.id = r.series_id
       GROUP BY s.slug, r.file_name ORDER BY s.slug, r.file_name`,
    );
    expect(runsPerFile).toHaveLength(SERIES.length * FILES_PER_SERIES);
    for (const row of runsPerFile) expect(row, JSON.stringify(row)).toMatchObject({ runs: 1, accepted: ROWS_PER_FILE });
    for (const slug of SERIES) {
      const folder = path.join(app.dataDir, 'drops', slug);
      expect(fs.readdirSync(folder).filter((f) => f.endsWith('.csv'))).toEqual([]);
      expect(
        fs
          .readdirSync(path.join(folder, 'processed'))
          .filter((f) => f.endsWith('.csv'))
          .sort(),
      ).toEqual(Array.from({ length: FILES_PER_SERIES }, (_, f) => `part-${f}.csv`));
    }

    // No series analysed twice for the same data, and every snapshot judged exactly once by its rule.
    const twice = await raw.all(`SELECT series_id, n, data_to, COUNT(*) AS c FROM analysis_snapshots GROUP BY series_id, n, data_to HAVING COUNT(*) > 1`);
    expect(twice).toEqual([]);
    expect(await raw.all(unjudgedSql)).toEqual([]);

    // One alert per series and rule, opened once, one message per watcher, each delivered once.
    expect(await raw.count('alerts')).toBe(SERIES.length);
    expect(await raw.count('alert_events', "action = 'open'")).toBe(SERIES.length);
    const outbox = await raw.all<{ kind: string; status: string }>('SELECT kind, status FROM mail_outbox');
    expect(outbox.filter((m) => m.kind === 'alert-new')).toHaveLength(SERIES.length);
    const delivered = sinkMessages(app);
    expect(delivered).toHaveLength(outbox.length);
    expect(new Set(delivered.map((m) => m.messageId)).size).toBe(delivered.length);
  });
});
