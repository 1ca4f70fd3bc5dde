import path from 'node:path';
import { Op } from 'sequelize';
import type { SMTPServer } from 'smtp-server';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { useTempDataDir } from '../support/temp-db';
import { freePort, startApp, type RunningApp } from '../support/app';
import { Session, signedIn } from '../support/session';

// SQLite in a temp DATA_DIR unless DATABASE_URL names another database, which the schedulers inherit.
const dataDir = useTempDataDir('bw-shared-analysis-');

const { migrateUp } = await import('@/migrations');
const { Alert, AnalysisSnapshot, Lease, MailMessage, Observation, RuleEvaluation, Series, closeDatabase, db } = await import('@/models');
const { startMailSink, listSinkMessages } = await import('@/lib/mail/sink');
const { ensureAuthSecret } = await import('@/lib/runtime/secret');
const { makeRule, makeSeries, makeUser, watch } = await import('../alerts/helpers');
const { foldRecord } = await import('../alerts/fold');
const { startScheduler, stopScheduler, waitFor } = await import('./scheduler');
type SchedulerProcess = import('./scheduler').SchedulerProcess;

const SERIES = 10;
const DAY = 86_400_000;
const mailbox = path.join(dataDir, 'mailbox');

/**
 * Two real scheduler processes (jobs/scheduler.ts) share the analysis of one network through the per-series
 * leases; one is killed with SIGKILL while it holds a series. Every due series must end analysed exactly once per
 * data change (one snapshot, its flag cleared), every rule judge each snapshot once, and each alert be opened and
 * mailed once. The dead holder's leases lapse after ANALYSIS_LEASE_SECONDS, as in production.
 *
 * Beside them two web processes (the product's start without its scheduler, on other ports, the same database) serve
 * one lead throughout: reads on both while the schedulers work and one dies, then triage split over both. What one
 * web process committed the other must answer at once (its read cache checks the database's change marker), and of
 * two acknowledgements of one alert sent to both at the same moment exactly one wins.
 */
describe('two schedulers and two web processes on one database, one scheduler killed mid-cycle', () => {
  let sink: SMTPServer;
  let sinkPort: number;
  const live: SchedulerProcess[] = [];
  const seriesIds: number[] = [];
  const webs: RunningApp[] = [];
  let sessions: Session[] = [];
  let leadEmail = '';

  const spawn = () => {
    const scheduler = startScheduler(
      { dataDir, mailSinkPort: sinkPort, baseUrl: 'http://127.0.0.1:9' },
      {
        ANALYSIS_CRON: '*/1 * * * * *',
        ANALYSIS_LEASE_SECONDS: '5',
        ANALYSIS_CONCURRENCY: '2',
        MAIL_CRON: '*/1 * * * * *',
        BACKTEST_CRON: '0 0 1 1 *',
        FRESHNESS_CRON: '0 0 1 1 *',
        INGEST_CRON: '0 0 1 1 *',
      },
    );
    live.push(scheduler);
    return scheduler;
  };

  const snapshotsPerSeries = async () => {
    const counts = new Map<number, number>(seriesIds.map((id) => [id, 0]));
    for (const s of await AnalysisSnapshot.findAll({ attributes: ['seriesId'] })) counts.set(s.seriesId, (counts.get(s.seriesId) ?? 0) + 1);
    return [...counts.values()];
  };

  /** Settled: nothing due, every rule has judged every ok snapshot of its series, and the outbox is empty. */
  const settled = async () => {
    if ((await Series.count({ where: { needsAnalysis: true } })) > 0) return false;
    const ok = await AnalysisSnapshot.count({ where: { status: 'ok' } });
    if ((await RuleEvaluation.count()) < ok) return false;
    return (await MailMessage.count({ where: { status: { [Op.ne]: 'sent' } } })) === 0 && (await MailMessage.count()) > 0;
  };

  const expectEachOnce = async () => {
    // Every rule judged every snapshot of its series once (the unique key would refuse a second, so count pairs).
    const evaluations = await RuleEvaluation.findAll({ attributes: ['ruleId', 'snapshotId'] });
    expect(new Set(evaluations.map((e) => `${e.ruleId}:${e.snapshotId}`)).size).toBe(evaluations.length);
    // At most one alert per rule (later evidence joins the open one), and each mailed once to its watcher.
    const alerts = await Alert.findAll({ attributes: ['id', 'ruleId'] });
    expect(alerts.length).toBeGreaterThan(0);
    expect(new Set(alerts.map((a) => a.ruleId)).size).toBe(alerts.length);
    const mails = await MailMessage.findAll({ attributes: ['dedupeKey', 'status', 'messageId'] });
    expect(mails.map((m) => m.status)).toEqual(mails.map(() => 'sent'));
    expect(new Set(mails.map((m) => m.dedupeKey)).size).toBe(mails.length);
    expect(mails.length).toBe(alerts.length);
    const delivered = listSinkMessages(mailbox);
    expect(delivered.length).toBe(mails.length);
  };

  /** A GET answered by one web process as JSON; anything but 200 fails with the answer's start. */
  const read = async <T>(web: number, pathname: string): Promise<T> => {
    const response = await sessions[web].fetch(pathname);
    const body = await response.text();
    expect(response.status, `${webs[web].baseUrl}${pathname}: ${body.slice(0, 300)}`).toBe(200);
    return JSON.parse(body) as T;
  };

  /** Every alert as "state@version" by id, as each web process answers it (the same query, one after the other). */
  const alertViews = () =>
    Promise.all(
      webs.map(async (_, web) => {
        const page = await read<{ items: { id: number; state: string; version: number }[] }>(web, '/api/alerts?queue=all&pageSize=100');
        return new Map(page.items.sort((a, b) => a.id - b.id).map((item) => [item.id, `${item.state}@${item.version}`]));
      }),
    );

  /** The latest snapshot id of every series, as each web process answers it. */
  const snapshotViews = () =>
    Promise.all(
      webs.map((_, web) =>
        Promise.all(seriesIds.map(async (_, i) => (await read<{ latestAnalysis: { id: number } | null }>(web, `/api/series/shared-${i}`)).latestAnalysis?.id)),
      ),
    );

  /**
   * Reads through both web processes, one after another on each, until the returned stop is called: the alert queue
   * and a series. Every answer must be 200, and neither process may ever show fewer alerts than it showed before (a node serving a
   * stale cache, or a snapshot older than the last commit, would).
   */
  const readBothWhile = () => {
    let running = true;
    const failures: string[] = [];
    let answered = 0;
    const loops = webs.map(async (web, w) => {
      let seen = 0;
      for (let i = 0; running; i++) {
        const pathname = i % 2 ? `/api/series/shared-${i % SERIES}` : '/api/alerts?queue=all&pageSize=100';
        try {
          const response = await sessions[w].fetch(pathname);
          const body = await response.text();
          answered++;
          if (response.status !== 200) failures.push(`${web.baseUrl}${pathname}: ${response.status} ${body.slice(0, 200)}`);
          else if (i % 2 === 0) {
            const total = (JSON.parse(body) as { items: unknown[] }).items.length;
            if (total < seen) failures.push(`${web.baseUrl} showed ${total} alerts after ${seen}`);
            seen = Math.max(seen, total);
          }
        } catch (error) {
          failures.push(`${web.baseUrl}${pathname}: ${String(error)}`);
        }
        await new Promise((r) => setTimeout(r, 100));
      }
    });
    return async () => {
      running = false;
      await Promise.all(loops);
      return { answered, failures };
    };
  };

  /** Both web processes answer what the database holds: the same alerts, states and versions, the same latest snapshots. */
  const expectWebsAgree = async () => {
    const stored = new Map(
      (await Alert.findAll({ attributes: ['id', 'state', 'version'], order: [['id', 'ASC']] })).map((a) => [a.id, `${a.state}@${a.version}`]),
    );
    const [first, second] = await alertViews();
    expect([...first]).toEqual([...stored]);
    expect([...second]).toEqual([...stored]);
    const latest = await Promise.all(
      seriesIds.map(async (id) => (await AnalysisSnapshot.findOne({ where: { seriesId: id }, order: [['id', 'DESC']], attributes: ['id'] }))?.id),
    );
    expect(await snapshotViews()).toEqual([latest, latest]);
    return stored;
  };

  beforeAll(async () => {
    await db();
    await migrateUp();
    sinkPort = await freePort();
    sink = await startMailSink(sinkPort, mailbox);
    const lead = await makeUser('lead');
    leadEmail = lead.email;
    for (let i = 0; i < SERIES; i++) {
      const series = await makeSeries(`shared-${i}`);
      await series.update({
        settings: { detrend: 'moving-average', movingAverageWidth: 11, window: '150 points', surrogates: 199, indicators: ['ac1', 'variance'] },
      });
      await Observation.bulkCreate(foldRecord(600, 1000 + i).map((r) => ({ seriesId: series.id, ...r })));
      await makeRule(series, lead, { indicator: 'ac1', minTau: 0.2, maxSurrogateP: 0.05 });
      await watch(lead, series, 'immediate');
      await series.update({ needsAnalysis: true, dataChangedAt: new Date() });
      seriesIds.push(series.id);
    }
    // The session secret exists before the web processes start side by side, as after a first start: both sign
    // cookies with it (the file in DATA_DIR on SQLite, app_state on PostgreSQL), so either accepts the other's.
    ensureAuthSecret();
    // One worker each: two processes are the point, not the cores. Mail goes to the test's sink (the web tier sends none here).
    const webEnv = { WEB_WORKERS: '1', SMTP_URL: `smtp://127.0.0.1:${sinkPort}` };
    webs.push(...(await Promise.all([0, 1].map(() => startApp({ dataDir, scheduler: false, env: webEnv })))));
    sessions = await Promise.all(webs.map((web) => signedIn(web.baseUrl, leadEmail, 'unit-test-password')));
  }, 300_000);

  afterAll(async () => {
    await Promise.all(live.map(stopScheduler));
    await Promise.all(webs.map((web) => web.stop()));
    await new Promise<void>((resolve) => (sink ? sink.close(() => resolve()) : resolve()));
    await closeDatabase();
  });

  test('every series analysed once per data change, every alert and mail once, both web processes agreeing', async () => {
    // A cookie signed by one web process is accepted by the other: sessions live in no process.
    expect((await new Session(webs[1].baseUrl).adoptCookies(sessions[0]).fetch('/api/alerts?queue=all')).status).toBe(200);
    const stopReading = readBothWhile();
    const victim = spawn();
    spawn();
    const marker = `:${victim.process.pid}:`;
    await waitFor(
      'the first scheduler to hold a series mid-cycle',
      async () => {
        const held = await Lease.findAll({ attributes: ['name', 'holder'] });
        const holding = held.some((l) => l.name.startsWith('analysis:') && l.holder.includes(marker));
        return holding && (await AnalysisSnapshot.count()) > 0 && (await Series.count({ where: { needsAnalysis: true } })) > 0;
      },
      120_000,
    );
    victim.process.kill('SIGKILL');
    await victim.exited;
    expect(victim.process.signalCode).toBe('SIGKILL');

    await waitFor('the survivor to finish the cycle, judge and mail', settled, 180_000);
    const during = await stopReading();
    expect(during.failures).toEqual([]);
    expect(during.answered).toBeGreaterThan(10);
    expect(await snapshotsPerSeries()).toEqual(seriesIds.map(() => 1));
    await expectEachOnce();
    const opened = await expectWebsAgree();

    // Triage split over both processes: each acknowledgement is read back through the other one at once. The first
    // alert is acknowledged through both at the same moment: one wins, the other is told it changed (409).
    const [contested, ...rest] = [...opened.keys()];
    for (const [k, id] of rest.entries()) {
      const version = Number(opened.get(id)!.split('@')[1]);
      const response = await sessions[k % 2].json(`/api/alerts/${id}/actions`, 'POST', { action: 'acknowledge', version });
      expect(response.status, await response.clone().text()).toBe(200);
      expect(await read(1 - (k % 2), `/api/alerts/${id}`)).toMatchObject({ state: 'acknowledged', version: version + 1 });
    }
    const contestedVersion = Number(opened.get(contested)!.split('@')[1]);
    const both = await Promise.all(
      sessions.map((session) => session.json(`/api/alerts/${contested}/actions`, 'POST', { action: 'acknowledge', version: contestedVersion })),
    );
    expect(both.map((r) => r.status).sort()).toEqual([200, 409]);
    const acknowledged = await expectWebsAgree();
    expect([...acknowledged.values()].every((v) => v.startsWith('acknowledged@'))).toBe(true);

    // A second data change with two schedulers again: one more snapshot per series, no new alert or mail.
    const stopReadingAgain = readBothWhile();
    spawn();
    const alertsBefore = await Alert.count();
    const mailsBefore = await MailMessage.count();
    const last = new Map((await Observation.findAll({ attributes: ['seriesId', 't'], order: [['t', 'ASC']] })).map((o) => [o.seriesId, Number(o.t)]));
    for (const id of [...seriesIds].reverse()) {
      await Observation.create({ seriesId: id, t: last.get(id)! + DAY, value: 0.5 });
      await Series.update({ needsAnalysis: true, dataChangedAt: new Date() }, { where: { id } });
    }
    await waitFor(
      'the second data change to be analysed and judged',
      async () => (await settled()) && (await snapshotsPerSeries()).every((c) => c === 2),
      180_000,
    );
    const later = await stopReadingAgain();
    expect(later.failures).toEqual([]);
    expect(await snapshotsPerSeries()).toEqual(seriesIds.map(() => 2));
    await expectEachOnce();
    expect(await Alert.count()).toBe(alertsBefore);
    expect(await MailMessage.count()).toBe(mailsBefore);
    // The acknowledgements made through either web process survived the new evidence, and both still agree.
    expect([...(await expectWebsAgree()).values()].every((v) => v.startsWith('acknowledged@'))).toBe(true);
    // Each second snapshot says how it was computed; an incremental one names the snapshot it continued.
    for (const id of seriesIds) {
      const [second, first] = await AnalysisSnapshot.findAll({ where: { seriesId: id }, order: [['id', 'DESC']], attributes: ['id', 'provenance'] });
      const update = second.provenance!.update!;
      expect(['full', 'incremental']).toContain(update.mode);
      if (update.mode === 'incremental') expect(update.basedOnSnapshot).toBe(first.id);
    }
  }, 600_000);
});
