import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-draft-backtest-');

const { migrateUp } = await import('@/migrations');
const { AlertRule, BacktestJob, User } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { ingestObservations } = await import('@/lib/intake/pipeline');
const { requestBacktest, runNextBacktest } = await import('@/lib/backtest/jobs');
const { simulateAr1 } = await import('@/lib/demo/models');
const { backtestRequestSchema } = await import('@/lib/schemas/backtest');

beforeAll(async () => {
  await migrateUp();
});

const DAY = 86_400_000;

describe('a backtest of a draft (the rule editor’s unsaved changes)', () => {
  it('replays the draft’s fields while the stored rule stays as saved', async () => {
    const series = await createSeries(
      { slug: 'draft-control', name: 'Draft control', intervalMs: DAY, settings: { detrend: 'linear', window: 0.25, surrogates: 19 } },
      null,
    );
    // a stationary AR(1) record of 200 days (Box et al. 2015, Sec. 3.2)
    const x = simulateAr1({ n: 200, phi: 0.5, sigma: 1, seed: 3 });
    const csv = `time,value\n${Array.from(x, (v, i) => `${new Date(Date.UTC(2021, 0, 1) + i * DAY).toISOString()},${v}`).join('\n')}\n`;
    expect((await ingestObservations({ series, source: 'push', csv })).status).toBe('succeeded');
    const rule = await AlertRule.create({
      seriesId: series.id,
      indicator: 'ac1',
      minTau: 0.3,
      maxSurrogateP: null,
      maxKendallP: null,
      levelThreshold: null,
      persistence: 1,
      severity: 'watch',
      fdrLevel: null,
      createdBy: null,
    });

    const request = backtestRequestSchema.parse({ every: 5, draft: { indicator: 'variance', minTau: 0.5, persistence: 2 } });
    const lead = await User.create({ email: 'lead@example.test', name: 'Lead', role: 'lead', passwordHash: null, active: true });
    const job = await requestBacktest(rule.id, request, lead);
    expect(job.params).toMatchObject({ every: 5, draft: { indicator: 'variance', direction: 'rising', minTau: 0.5, persistence: 2 } });
    expect(await runNextBacktest({ threads: 1 })).toBe(job.id);
    const done = (await BacktestJob.findByPk(job.id))!;
    expect(done.error).toBeNull();
    expect((done.result as { rule: { indicator: string; minTau: number; persistence: number } }).rule).toMatchObject({
      indicator: 'variance',
      minTau: 0.5,
      persistence: 2,
    });
    expect((await AlertRule.findByPk(rule.id))!.indicator).toBe('ac1');
  }, 120_000);

  it('a draft is validated as a rule is: a Kendall p gate is refused', () => {
    expect(backtestRequestSchema.safeParse({ draft: { indicator: 'ac1', minTau: 0.3, maxKendallP: 0.05 } }).success).toBe(false);
  });
});
