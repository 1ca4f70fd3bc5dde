import path from 'node:path';
import { Op } from 'sequelize';
import type { SMTPServer } from 'smtp-server';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { useTempDataDir } from '../support/temp-db';
import { freePort } from '../support/app';

// SQLite in a temp DATA_DIR unless DATABASE_URL names another database, which the schedulers inherit.
const dataDir = useTempDataDir('bw-shared-analysis-');

const { migrateUp } = await import('@/migrations');
const { Alert, AnalysisSnapshot, Lease, MailMessage, Observation, RuleEvaluation, Series, closeDatabase, db } = await import('@/models');
const { startMailSink, listSinkMessages } = await import('@/lib/mail/sink');
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
 */
describe('two schedulers sharing the analysis cycle, one killed mid-cycle', () => {
  let sink: SMTPServer;
  let sinkPort: number;
  const live: SchedulerProcess[] = [];
  const seriesIds: number[] = [];

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

  beforeAll(async () => {
    await db();
    await migrateUp();
    sinkPort = await freePort();
    sink = await startMailSink(sinkPort, mailbox);
    const lead = await makeUser('lead');
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
  }, 120_000);

  afterAll(async () => {
    await Promise.all(live.map(stopScheduler));
    await new Promise<void>((resolve) => (sink ? sink.close(() => resolve()) : resolve()));
    await closeDatabase();
  });

  test('every series analysed once per data change, every alert and mail once', async () => {
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
    expect(await snapshotsPerSeries()).toEqual(seriesIds.map(() => 1));
    await expectEachOnce();

    // A second data change with two schedulers again: one more snapshot per series, no new alert or mail.
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
    expect(await snapshotsPerSeries()).toEqual(seriesIds.map(() => 2));
    await expectEachOnce();
    expect(await Alert.count()).toBe(alertsBefore);
    expect(await MailMessage.count()).toBe(mailsBefore);
    // Each second snapshot says how it was computed; an incremental one names the snapshot it continued.
    for (const id of seriesIds) {
      const [second, first] = await AnalysisSnapshot.findAll({ where: { seriesId: id }, order: [['id', 'DESC']], attributes: ['id', 'provenance'] });
      const update = second.provenance!.update!;
      expect(['full', 'incremental']).toContain(update.mode);
      if (update.mode === 'incremental') expect(update.basedOnSnapshot).toBe(first.id);
    }
  }, 420_000);
});
