import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { BacktestJob, MailMessage, RuleEvaluation, Series, db } from '@/models';
import { evaluateSnapshots, judgeRule, type RuleThresholds } from '@/lib/alerts/evaluate';
import { createRule, fdrFloorWarning, presentRules, ruleStatuses, updateRule } from '@/lib/alerts/rules';
import { dismissAlert } from '@/lib/alerts/triage';
import { replayRuleOf } from '@/lib/backtest/jobs';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { newAlertMail, type AlertEvidence } from '@/lib/mail/templates';
import { UnprocessableError } from '@/lib/http/errors';
import { ruleCreateSchema } from '@/lib/schemas/rule';
import { zodFieldErrors } from '@/lib/http/handler';
import { ZodError } from 'zod';
import { makeRule, makeSeries, makeSnapshot, makeUser, watch } from './helpers';
import type { Actor } from '@/lib/auth/roles';
import type { TrendDirection } from '@/lib/engine/direction';

let lead: Actor;

beforeAll(async () => {
  await db();
  await migrateUp();
  lead = await makeUser('lead');
});

/** A summary for one indicator whose stored surrogate p is in `direction` (the engine's: the indicator's own). */
const summaryOf = (indicator: string, tau: number, p: number, direction: TrendDirection) => ({
  kendall: { [indicator]: { tau, p: 0.001, direction } },
  significance: { [indicator]: { p, count: 99, method: 'ar1', direction, nullSd: 0.05, nullCount: 99 } },
  latest: { [indicator]: { time: 0, value: -0.02 } },
});

describe('rules judged in a direction', () => {
  const recovery: RuleThresholds = {
    indicator: 'recovery',
    direction: 'falling',
    minTau: 0.5,
    maxSurrogateP: 0.05,
    levelThreshold: null,
    levelDirection: 'above',
    fdrLevel: null,
  };
  // The example: memory rising from φ = 0.2 to 0.97 gives recovery tau = −0.96, surrogate p 0.01 downwards.
  const falling = summaryOf('recovery', -0.96, 0.01, 'falling');

  it('a recovery rule (falling, its default) passes on a falling recovery rate', () => {
    expect(ruleCreateSchema.parse({ indicator: 'recovery', minTau: 0.5 }).direction).toBe('falling');
    const j = judgeRule(recovery, falling);
    expect(j).toMatchObject({ passed: true, tau: -0.96, orientedTau: 0.96, surrogateP: 0.01, direction: 'falling' });
  });

  it('a rising-direction rule on the same evidence does not, and its p is recomputed from the surrogate taus', () => {
    // Surrogate taus as the snapshot's curves keep them (null = a surrogate without a defined tau).
    const taus = [-0.99, -0.9, -0.5, -0.1, 0.1, 0.3, 0.5, 0.7, 0.95, null] as unknown as number[];
    const j = judgeRule({ ...recovery, direction: 'rising' }, falling, null, taus);
    // Monte Carlo p upwards = (1 + #{τs ≥ −0.96})/(N + 1) over the N = 9 finite taus: 8 of them ≥ −0.96 → 9/10
    // (Davison & Hinkley 1997, Bootstrap Methods, Sec. 4.2.1 — from memory; counted by hand).
    expect(j.surrogateP).toBeCloseTo(9 / 10, 15);
    expect(j.passed).toBe(false);
    expect(j.failed).toEqual(['tau (rising) below 0.5', 'surrogate p above 0.05']);
    // Without the taus the p in another direction is unknown: the rule is not judged rather than judged on the wrong tail.
    expect(judgeRule({ ...recovery, direction: 'rising' }, falling).cannotJudge).toMatch(/needs the surrogate taus/);
  });

  it('two-sided: an "either" rule takes |tau| and the two-sided p', () => {
    const skew = summaryOf('skewness', -0.7, 0.02, 'two-sided');
    const either: RuleThresholds = { ...recovery, indicator: 'skewness', direction: 'either', minTau: 0.6 };
    expect(ruleCreateSchema.parse({ indicator: 'skewness', minTau: 0.5 }).direction).toBe('either');
    expect(judgeRule(either, skew)).toMatchObject({ passed: true, orientedTau: 0.7, surrogateP: 0.02 });
    expect(judgeRule({ ...either, minTau: 0.71 }, skew).failed).toEqual(['tau (either way) below 0.71']);
    // A rising rule on the same skewness needs the upper-tail p: (1 + #{τs ≥ −0.7})/(N + 1) with τs = [−0.8, −0.2, 0.1, 0.75] → 4/5.
    expect(judgeRule({ ...either, direction: 'rising' }, skew, null, [-0.8, -0.2, 0.1, 0.75]).surrogateP).toBeCloseTo(4 / 5, 15);
    // Either way with the same taus: (1 + #{|τs| ≥ 0.7})/(N + 1) = (1 + 2)/5 (by hand).
    expect(
      judgeRule(either, { ...skew, significance: { skewness: { ...skew.significance.skewness, direction: 'rising' as const } } }, null, [-0.8, -0.2, 0.1, 0.75])
        .surrogateP,
    ).toBeCloseTo(3 / 5, 15);
  });
});

describe("a rule looking against the indicator's own direction, in the analysis cycle", () => {
  it('reads the surrogate taus kept with the snapshot and judges the p in its own direction', async () => {
    const series = await makeSeries();
    const rule = await makeRule(series, lead, { direction: 'falling', minTau: 0.5, maxSurrogateP: 0.2 });
    // 9 surrogate taus; observed tau −0.8. Falling p = (1 + #{τs ≤ −0.8})/(N + 1) = (1 + 1)/10 = 0.2 (by hand).
    const taus = [-0.85, -0.6, -0.3, 0, 0.1, 0.2, 0.4, 0.5, 0.9];
    const snap = await makeSnapshot(series, { tau: -0.8, surrogateP: 0.99 }, { curves: { surrogateTaus: { ac1: taus } } });
    const report = await evaluateSnapshots([snap]);
    expect(report.opened).toHaveLength(1);
    const e = (await RuleEvaluation.findOne({ where: { ruleId: rule.id } }))!;
    expect(e).toMatchObject({ direction: 'falling', tau: -0.8, passed: true });
    expect(e.surrogateP).toBeCloseTo(0.2, 15);
    // Once the curves are pruned, the same rule cannot be judged on that snapshot's summary alone.
    const pruned = await makeSnapshot(series, { tau: -0.8, surrogateP: 0.99 });
    await evaluateSnapshots([pruned]);
    expect((await RuleEvaluation.findOne({ where: { ruleId: rule.id, snapshotId: pruned.id } }))!.outcome).toMatch(
      /^cannot-judge: the surrogate p \(falling\) needs the surrogate taus/,
    );
  });
});

describe('rules a series cannot judge are refused with 422', () => {
  async function refusal(promise: Promise<unknown>): Promise<UnprocessableError> {
    const error = await promise.then(
      () => null,
      (e: unknown) => e,
    );
    expect(error).toBeInstanceOf(UnprocessableError);
    return error as UnprocessableError;
  }

  it('a Kendall p gate, with a message saying why', () => {
    const parsed = ruleCreateSchema.safeParse({ indicator: 'ac1', minTau: 0.3, maxKendallP: 0.01 });
    expect(parsed.success).toBe(false);
    const fields = zodFieldErrors(parsed.error as ZodError);
    expect(fields.maxKendallP[0]).toMatch(/no longer a gate.*independent values/);
    expect(ruleCreateSchema.parse({ indicator: 'ac1', minTau: 0.3, maxKendallP: null }).maxKendallP).toBeNull();
  });

  it('a surrogate test on a series without surrogates, an indicator the series does not compute, an unreachable p', async () => {
    const bare = await Series.create({
      slug: 'no-surrogates',
      name: 'No surrogates',
      csvMapping: { timeColumn: 0, valueColumn: 1, timeFormat: 'iso8601' },
      intervalMs: 86_400_000,
      dataChangedAt: null,
      retiredAt: null,
      settings: { surrogates: 0, indicators: ['variance', 'ac1'] },
    });
    const e1 = await refusal(createRule(bare.id, { indicator: 'ac1', minTau: 0.3, maxSurrogateP: 0.05 }, lead));
    expect(e1.status).toBe(422);
    expect(e1.fields?.maxSurrogateP?.[0]).toMatch(/runs no surrogates/);
    const e2 = await refusal(createRule(bare.id, { indicator: 'ac1', minTau: 0.3, fdrLevel: 0.1 }, lead));
    expect(e2.fields?.fdrLevel?.[0]).toMatch(/runs no surrogates/);
    const e3 = await refusal(createRule(bare.id, { indicator: 'recovery', minTau: 0.3 }, lead));
    expect(e3.fields?.indicator?.[0]).toMatch(/does not compute recovery/);
    // A tau-only rule on a computed indicator is fine.
    await createRule(bare.id, { indicator: 'ac1', minTau: 0.3 }, lead);

    const few = await makeSeries(); // 100 surrogates: the smallest p is 1/101
    const e4 = await refusal(createRule(few.id, { indicator: 'ac1', minTau: 0.3, maxSurrogateP: 0.005 }, lead));
    expect(e4.fields?.maxSurrogateP?.[0]).toMatch(/1\/101.*could never pass/);
    const e5 = await refusal(createRule(few.id, { indicator: 'ac1', minTau: 0.3, fdrLevel: 0.009 }, lead));
    expect(e5.fields?.fdrLevel?.[0]).toMatch(/could never pass/);
    // An update that would make an existing rule unjudgeable is refused the same way.
    const rule = await makeRule(few, lead);
    const e6 = await refusal(updateRule(rule.id, { maxSurrogateP: 0.001 }, lead));
    expect(e6.fields?.maxSurrogateP).toBeDefined();
    // A rule its series can no longer judge (surrogates switched off since) can still be switched off.
    const kept = await makeRule(few, lead);
    await few.update({ settings: { ...few.settings, surrogates: 0 } });
    expect((await updateRule(kept.id, { active: false }, lead)).active).toBe(false);
    expect((await refusal(updateRule(kept.id, { active: true }, lead))).fields?.maxSurrogateP?.[0]).toMatch(/runs no surrogates/);
  });

  it('when the latest analysis says the stretch is too short', async () => {
    const series = await makeSeries();
    await makeSnapshot(
      series,
      { tau: null },
      { status: 'error', error: 'The stretch since the shift on 2024-05-01 is too short for the window (40 of 200 points).' },
    );
    const e = await refusal(createRule(series.id, { indicator: 'ac1', minTau: 0.3 }, lead));
    expect(e.message).toMatch(/too short for the window/);
  });
});

describe('a rule that cannot be judged says so on its series', () => {
  it('records cannot-judge for a failed analysis and for missing numbers, breaks the streak, and ruleStatuses shows it', async () => {
    const series = await makeSeries();
    const rule = await makeRule(series, lead, { persistence: 2 });
    const first = await makeSnapshot(series, { tau: 0.6, surrogateP: 0.01 });
    const failed = await makeSnapshot(series, { tau: null }, { status: 'error', error: 'A gap of 12 days is longer than maxGap (3 points).' });
    const report = await evaluateSnapshots([first, failed]);
    expect(report).toMatchObject({ evaluated: 2, cannotJudge: 1, opened: [] });
    const rows = await RuleEvaluation.findAll({ where: { ruleId: rule.id }, order: [['snapshotId', 'ASC']] });
    expect(rows.map((r) => [r.streak, r.passed])).toEqual([
      [1, true],
      [0, false],
    ]);
    expect(rows[1].outcome).toBe('cannot-judge: the analysis failed: A gap of 12 days is longer than maxGap (3 points).');

    let [status] = await ruleStatuses(series.id);
    expect(status.standing).toBe('cannot-judge');
    expect(status.latest!.outcome).toMatch(/gap of 12 days/);

    // Windows below the coverage floor leave the indicator without a trend: not judged, with the reason.
    const thin = await makeSnapshot(series, { tau: null, surrogateP: null }, { summary: { quality: { windowsBelowCoverage: 37 } } });
    await evaluateSnapshots([thin]);
    [status] = await ruleStatuses(series.id);
    expect(status.standing).toBe('cannot-judge');
    expect(status.latest!.outcome).toBe('cannot-judge: no ac1 trend: too few windows with a value (37 windows below the coverage floor)');

    await evaluateSnapshots([await makeSnapshot(series, { tau: 0.1, surrogateP: 0.4 })]);
    [status] = await ruleStatuses(series.id);
    expect(status.standing).toBe('not-met');
  });
});

describe('quiet-period override in the cycle', () => {
  it('can be met at the surrogate floor; not when the tau gain is inside 2 null standard deviations', async () => {
    const analyst = await makeUser('analyst');
    const series = await makeSeries();
    await makeRule(series, lead, { quietPeriodHours: 48, maxSurrogateP: 0.05 });
    const floor = 1 / 101; // 100 surrogates
    const opened = await evaluateSnapshots([await makeSnapshot(series, { tau: 0.5, surrogateP: floor, nullSd: 0.08 })]);
    await dismissAlert(opened.opened[0], 'statistical-fluke', analyst);
    // 0.5 + 2·0.08 = 0.66: 0.65 is inside the margin.
    expect(await evaluateSnapshots([await makeSnapshot(series, { tau: 0.65, surrogateP: floor, nullSd: 0.08 })])).toMatchObject({ opened: [], suppressed: 1 });
    // No null spread stored (a snapshot from before nullSd): the quiet period holds.
    expect(await evaluateSnapshots([await makeSnapshot(series, { tau: 0.95, surrogateP: floor, nullSd: null })])).toMatchObject({ opened: [], suppressed: 1 });
    // 0.67 ≥ 0.66 with p at the same floor as the closed alert: clearly stronger.
    expect((await evaluateSnapshots([await makeSnapshot(series, { tau: 0.67, surrogateP: floor, nullSd: 0.08 })])).opened).toHaveLength(1);
  });
});

describe('calibrated false-alarm rate and direction in rules and mails', () => {
  it('queues a calibration on create and update, shows the latest on the rule and in the new-alert mail', async () => {
    const reader = await makeUser('analyst');
    const series = await makeSeries();
    await watch(reader, series, 'immediate');
    const rule = await createRule(series.id, { indicator: 'recovery', minTau: 0.5, maxSurrogateP: 0.05 }, lead);
    expect(rule.direction).toBe('falling');
    const queued = await BacktestJob.findAll({ where: { ruleId: rule.id, kind: 'calibration' } });
    expect(queued).toHaveLength(1);
    let [record] = await presentRules([rule]);
    expect(record).toMatchObject({ direction: 'falling', maxKendallP: null, calibration: null });

    // A new alert before any calibration finished says so.
    const snap = await makeSnapshot(series, { indicator: 'recovery', tau: -0.8, surrogateP: 0.01, direction: 'falling' });
    const first = await evaluateSnapshots([snap]);
    expect(first.opened).toHaveLength(1);
    const [mail] = await MailMessage.findAll({ where: { kind: 'alert-new', toAddress: reader.email } });
    expect(mail.textBody).toContain('-0.80 (falling)');
    expect(mail.textBody).toContain('tau ≤ -0.50 (falling)');
    expect(mail.textBody).toContain('not yet calibrated');
    expect(mail.textBody).toMatch(/Kendall p\s+0\.001 \(descriptive; assumes independent values\)/);

    // A finished calibration stores the rule and settings it replayed (lib/backtest/jobs.ts), so a later change makes it stale.
    const replayed = { rule: replayRuleOf(rule), settings: analysisSettingsSchema.parse((await Series.findByPk(series.id))!.settings) };
    await queued[0].update({
      status: 'succeeded',
      finishedAt: new Date(Date.UTC(2026, 0, 5)),
      result: { ...replayed, calibration: { surrogates: 200, falseAlarmsPerYear: 0.21, falseAlarmsPerYearInterval: [0.12, 0.34] } },
    });
    [record] = await presentRules([rule]);
    expect(record.calibration).toMatchObject({ jobId: queued[0].id, falseAlarmsPerYear: 0.21, interval: [0.12, 0.34], surrogates: 200 });

    await updateRule(rule.id, { minTau: 0.6 }, lead);
    expect(await BacktestJob.count({ where: { ruleId: rule.id, kind: 'calibration' } })).toBe(2);
    await updateRule(rule.id, { severity: 'warning' }, lead); // not part of the calibrated procedure
    expect(await BacktestJob.count({ where: { ruleId: rule.id, kind: 'calibration' } })).toBe(2);
  });

  it('the mail template states the calibrated rate', () => {
    const evidence: AlertEvidence = {
      alertId: 3,
      kind: 'slowing-down',
      severity: 'watch',
      series: { name: 'Lake', slug: 'lake', site: '', timeZone: 'UTC' },
      indicator: 'ac1',
      direction: 'rising',
      tau: 0.55,
      kendallP: 0.01,
      kendallDirection: 'rising',
      surrogateP: 0.02,
      surrogateCount: 99,
      surrogateMethod: 'ar1',
      latestValue: 0.7,
      windowFraction: 0.5,
      windowPoints: 100,
      detrend: 'gaussian',
      bandwidth: 0.1,
      bandwidthPoints: 20,
      dataFrom: 0,
      dataTo: 86_400_000,
      n: 200,
      rule: { minTau: 0.3, direction: 'rising', maxSurrogateP: 0.05, fdrLevel: null, levelThreshold: null, levelDirection: 'above', persistence: 1 },
      calibration: { falseAlarmsPerYear: 0.21, interval: [0.12, 0.34], surrogates: 200, finishedAt: '2026-01-05T00:00:00.000Z' },
      shift: null,
    };
    const text = newAlertMail(evidence).text;
    expect(text).toContain('0.55 (rising)');
    expect(text).toContain('0.21 false alarms per year, 95% interval 0.12–0.34 (live procedure replayed on 200 surrogates, 2026-01-05 00:00 UTC)');
  });
});

describe('the false-discovery floor', () => {
  it('warns when N < m/q − 1 (one series alone could never pass BH)', () => {
    // q = 0.05 over m = 20 rules: a lone discovery needs p ≤ 0.0025, i.e. 1/(N + 1) ≤ 0.0025 → N ≥ 399 (by hand).
    expect(fdrFloorWarning(99, 0.05, 20)).toMatch(/at least 399 surrogates/);
    expect(fdrFloorWarning(399, 0.05, 20)).toBeNull();
    expect(fdrFloorWarning(19, 0.05, 1)).toBeNull();
  });

  it('presentRule carries the warning for the family size of the portfolio', async () => {
    const series = await makeSeries(); // 100 surrogates
    const rule = await createRule(series.id, { indicator: 'ac1', minTau: 0.3, fdrLevel: 0.01 }, lead);
    const [record] = await presentRules([rule]);
    // m ≥ 1 FDR rule at q = 0.01 needs N ≥ m/0.01 − 1 ≥ 99; with one rule N = 100 suffices, with two it needs 199.
    await createRule((await makeSeries()).id, { indicator: 'ac1', minTau: 0.3, fdrLevel: 0.01 }, lead);
    const [after] = await presentRules([rule]);
    expect(after.warnings[0]).toMatch(/needs at least 199 surrogates/);
    expect(record.warnings).toEqual([]); // the only FDR rule in this database then: m = 1 needs N ≥ 99
  });
});
