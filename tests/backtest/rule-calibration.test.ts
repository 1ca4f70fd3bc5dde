import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-rule-calibration-');

const { migrateUp } = await import('@/migrations');
const { AlertRule, BacktestJob, User } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { ingestObservations } = await import('@/lib/intake/pipeline');
const { queueRuleCalibration, latestRuleCalibration, runNextBacktest } = await import('@/lib/backtest/jobs');
const { simulateAr1 } = await import('@/lib/demo/models');
const { createMark, removeMark } = await import('@/lib/marks/write');

beforeAll(async () => {
  await migrateUp();
});

const DAY = 86_400_000;

async function ruleOn(seriesId: number | null) {
  return AlertRule.create({
    seriesId,
    indicator: 'ac1',
    minTau: 0.3,
    maxSurrogateP: 0.1,
    maxKendallP: null,
    levelThreshold: null,
    persistence: 1,
    severity: 'watch',
    fdrLevel: null,
    createdBy: null,
  });
}

describe('a rule’s own calibration (queueRuleCalibration, latestRuleCalibration)', () => {
  it('queues with the live defaults, keeps only the newest waiting one, and reports false alarms a year with an exact interval', async () => {
    const series = await createSeries(
      { slug: 'calibrated-control', name: 'Calibrated control', intervalMs: DAY, settings: { detrend: 'linear', window: 0.25, surrogates: 19 } },
      null,
    );
    // a stationary AR(1) control of 300 days (Box et al. 2015, Sec. 3.2)
    const x = simulateAr1({ n: 300, phi: 0.5, sigma: 1, seed: 5 });
    const csv = `time,value\n${Array.from(x, (v, i) => `${new Date(Date.UTC(2020, 0, 1) + i * DAY).toISOString()},${v}`).join('\n')}\n`;
    expect((await ingestObservations({ series, source: 'push', csv })).status).toBe('succeeded');
    const rule = await ruleOn(series.id);

    const first = await queueRuleCalibration(rule.id, null);
    const second = await queueRuleCalibration(rule.id, null);
    expect(first?.kind).toBe('calibration');
    expect((await BacktestJob.findByPk(first!.id))!.status).toBe('cancelled');
    expect(second!.params).toMatchObject({ every: 1, calibration: { surrogates: 200, method: 'ar1' }, ruleCalibration: true });

    expect(await runNextBacktest({ threads: 1 })).toBe(second!.id);
    const done = (await BacktestJob.findByPk(second!.id))!;
    expect(done.error).toBeNull();
    expect(done.status).toBe('succeeded');

    const latest = (await latestRuleCalibration([rule.id])).get(rule.id)!;
    expect(latest.jobId).toBe(second!.id);
    expect(latest.surrogates).toBe(200);
    expect(latest.falseAlarmsPerYear).not.toBeNull();
    const [lo, hi] = latest.interval!;
    expect(lo).toBeLessThanOrEqual(latest.falseAlarmsPerYear!);
    expect(hi).toBeGreaterThan(latest.falseAlarmsPerYear!);

    // a changed rule has no calibration until its next one has run
    await rule.update({ minTau: 0.4 });
    expect((await latestRuleCalibration([rule.id])).has(rule.id)).toBe(false);
  }, 180_000);

  it('a marked or removed tipping point queues the series’ rules again (their record before the first tipping point changed)', async () => {
    const series = await createSeries({ slug: 'marked-series', name: 'Marked series', intervalMs: DAY }, null);
    const rule = await ruleOn(series.id);
    const lead = await User.create({ email: 'lead@example.test', name: 'Lead', role: 'lead', passwordHash: 'not used', active: true });
    const queued = () => BacktestJob.count({ where: { ruleId: rule.id, status: 'queued' } });
    const mark = await createMark(series.id, { at: Date.UTC(2020, 5, 1), note: 'test', kind: 'tipping-point' }, lead);
    expect(await queued()).toBe(1);
    await removeMark(mark.id, lead);
    // the earlier waiting calibration is cancelled in favour of the newest
    expect(await queued()).toBe(1);
    expect(await BacktestJob.count({ where: { ruleId: rule.id, status: 'cancelled' } })).toBe(1);
  });

  it('gives null for a default rule (no series of its own)', async () => {
    const rule = await ruleOn(null);
    expect(await queueRuleCalibration(rule.id, null)).toBeNull();
  });
});
