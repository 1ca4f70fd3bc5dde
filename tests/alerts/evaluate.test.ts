import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { Alert, AlertRule, MailMessage, RuleEvaluation, db } from '@/models';
import { clearlyStronger, evaluateSnapshots, judgeRule, type RuleThresholds } from '@/lib/alerts/evaluate';
import { dismissAlert, confirmAlert, escalateAlert } from '@/lib/alerts/triage';
import { createRule } from '@/lib/alerts/rules';
import { createSeries } from '@/lib/series/registry';
import { makeRule, makeSeries, makeSnapshot, makeUser, watch } from './helpers';

beforeAll(async () => {
  await db();
  await migrateUp();
});

const base: RuleThresholds = {
  indicator: 'ac1',
  direction: 'rising',
  minTau: 0.3,
  maxSurrogateP: 0.05,
  levelThreshold: null,
  levelDirection: 'above',
  fdrLevel: null,
};
const summary = (tau: number | null, surrogateP: number | null, latest = 0.8, p = 0.01) => ({
  kendall: { ac1: { tau, p } },
  significance: surrogateP === null ? {} : { ac1: { p: surrogateP, count: 100, method: 'ar1' } },
  latest: { ac1: { time: 0, value: latest } },
});

describe('judgeRule', () => {
  it('passes only when every configured test passes, inclusive at the thresholds', () => {
    expect(judgeRule(base, summary(0.3, 0.05)).passed).toBe(true);
    expect(judgeRule(base, summary(0.299, 0.01)).failed).toEqual(['tau (rising) below 0.3']);
    expect(judgeRule(base, summary(0.6, 0.051)).failed).toEqual(['surrogate p above 0.05']);
  });

  it('does not judge on a missing number: says why, and does not pass', () => {
    const noSurrogates = judgeRule(base, summary(0.6, null));
    expect(noSurrogates).toMatchObject({ passed: false, failed: [] });
    expect(noSurrogates.cannotJudge).toMatch(/no surrogate test/);
    expect(judgeRule(base, summary(null, 0.01)).cannotJudge).toMatch(/no ac1 trend/);
    expect(judgeRule({ ...base, indicator: 'variance' }, summary(0.9, 0.01)).cannotJudge).toMatch(/not among the computed/);
  });

  it('no longer gates on the Kendall p (it assumes independent values); tests the level of the latest value in both directions', () => {
    const tauOnly = { ...base, maxSurrogateP: null };
    expect(judgeRule(tauOnly, summary(0.5, null, 0.8, 0.9)).passed).toBe(true);
    const above = { ...base, levelThreshold: 0.9 };
    expect(judgeRule(above, summary(0.5, 0.01, 0.9)).passed).toBe(true);
    expect(judgeRule(above, summary(0.5, 0.01, 0.89)).passed).toBe(false);
    const below = { ...base, minTau: -1, levelThreshold: 0.2, levelDirection: 'below' as const };
    expect(judgeRule(below, summary(0.5, 0.01, 0.2)).passed).toBe(true);
    expect(judgeRule(below, summary(0.5, 0.01, 0.21)).passed).toBe(false);
  });

  it('with a false-discovery level, judges the q-value of the cycle', () => {
    const fdr = { ...base, maxSurrogateP: null, fdrLevel: 0.1 };
    expect(judgeRule(fdr, summary(0.5, 0.01), 0.1).passed).toBe(true);
    expect(judgeRule(fdr, summary(0.5, 0.01), 0.11).passed).toBe(false);
    expect(judgeRule(fdr, summary(0.5, 0.01), null).passed).toBe(false);
  });
});

describe('clearlyStronger (the quiet-period test)', () => {
  it('needs oriented tau ≥ peak + 2 null standard deviations and a surrogate p not larger than the closed one', () => {
    const closed = { peakTau: 0.5, surrogateP: 0.04 };
    const sd = 0.05; // margin 2·0.05 = 0.1
    expect(clearlyStronger({ orientedTau: 0.6, surrogateP: 0.04, nullSd: sd }, closed)).toBe(true);
    expect(clearlyStronger({ orientedTau: 0.599, surrogateP: 0.001, nullSd: sd }, closed)).toBe(false);
    expect(clearlyStronger({ orientedTau: 0.8, surrogateP: 0.041, nullSd: sd }, closed)).toBe(false);
    expect(clearlyStronger({ orientedTau: 0.8, surrogateP: null, nullSd: sd }, closed)).toBe(false);
    expect(clearlyStronger({ orientedTau: 0.6, surrogateP: null, nullSd: sd }, { peakTau: 0.5, surrogateP: null })).toBe(true);
    // Without the null spread nothing counts as clearly stronger: the quiet period holds.
    expect(clearlyStronger({ orientedTau: 0.99, surrogateP: 0.001, nullSd: null }, closed)).toBe(false);
  });

  it('can be met when the closed alert sat at the surrogate floor 1/(N + 1)', () => {
    const floor = 1 / 100; // N = 99 surrogates: the smallest Monte Carlo p (Davison & Hinkley 1997, Sec. 4.2.1)
    expect(clearlyStronger({ orientedTau: 0.75, surrogateP: floor, nullSd: 0.1 }, { peakTau: 0.55, surrogateP: floor })).toBe(true);
    // …but not when the tau gain is inside the null spread margin (0.19 < 2·0.1).
    expect(clearlyStronger({ orientedTau: 0.74, surrogateP: floor, nullSd: 0.1 }, { peakTau: 0.55, surrogateP: floor })).toBe(false);
  });
});

describe('evaluateSnapshots', () => {
  it('opens one alert once the streak reaches the persistence, then adds evidence to it', async () => {
    const lead = await makeUser('lead');
    const analyst = await makeUser('analyst');
    const digestReader = await makeUser('viewer');
    const series = await makeSeries();
    await watch(analyst, series, 'immediate');
    await watch(digestReader, series, 'digest');
    const rule = await makeRule(series, lead, { persistence: 2 });

    const first = await makeSnapshot(series, { tau: 0.5, surrogateP: 0.01 });
    const r1 = await evaluateSnapshots([first]);
    expect(r1).toMatchObject({ evaluated: 1, opened: [] });
    expect((await RuleEvaluation.findOne({ where: { snapshotId: first.id } }))!.streak).toBe(1);

    const second = await makeSnapshot(series, { tau: 0.55, surrogateP: 0.01 });
    const r2 = await evaluateSnapshots([second]);
    expect(r2.opened).toHaveLength(1);
    const alert = (await Alert.findByPk(r2.opened[0]))!;
    expect(alert).toMatchObject({ state: 'new', ruleId: rule.id, firstSnapshotId: second.id, peakTau: 0.55, evaluationCount: 1 });

    // Only the immediate watcher is mailed at once; the digest reader hears of it in the digest.
    const mails = await MailMessage.findAll({ where: { kind: 'alert-new' } });
    expect(mails.map((m) => m.toAddress)).toEqual([analyst.email]);
    expect(mails[0].textBody).toContain(`/alerts/${alert.id}`);

    const third = await makeSnapshot(series, { tau: 0.7, surrogateP: 0.02 });
    const r3 = await evaluateSnapshots([third]);
    expect(r3).toMatchObject({ opened: [], updated: [alert.id] });
    await alert.reload();
    expect(alert).toMatchObject({ latestSnapshotId: third.id, evaluationCount: 2, peakTau: 0.7, version: 1 });
    expect(await Alert.count({ where: { seriesId: series.id } })).toBe(1);
    expect(await MailMessage.count({ where: { kind: 'alert-new' } })).toBe(1);

    // A re-run of the same cycle (or a second scheduler) judges nothing twice.
    const again = await evaluateSnapshots([second, third]);
    expect(again).toMatchObject({ evaluated: 0, skipped: 2 });
    expect(await RuleEvaluation.count({ where: { ruleId: rule.id } })).toBe(3);
  });

  it('resets the streak on a failing evaluation', async () => {
    const lead = await makeUser('lead');
    const series = await makeSeries();
    await makeRule(series, lead, { persistence: 2 });
    const report = await evaluateSnapshots([
      await makeSnapshot(series, { tau: 0.5, surrogateP: 0.01 }),
      await makeSnapshot(series, { tau: 0.1, surrogateP: 0.5 }),
      await makeSnapshot(series, { tau: 0.5, surrogateP: 0.01 }),
    ]);
    expect(report.opened).toHaveLength(0);
    const streaks = (await RuleEvaluation.findAll({ where: { seriesId: series.id }, order: [['snapshotId', 'ASC']] })).map((e) => e.streak);
    expect(streaks).toEqual([1, 0, 1]);
  });

  it('holds the quiet period after a dismissal unless the evidence is clearly stronger', async () => {
    const lead = await makeUser('lead');
    const analyst = await makeUser('analyst');
    const series = await makeSeries();
    await makeRule(series, lead, { quietPeriodHours: 48 });
    const opened = await evaluateSnapshots([await makeSnapshot(series, { tau: 0.5, surrogateP: 0.04 })]);
    await dismissAlert(opened.opened[0], 'instrument-fault', analyst, { note: 'Sensor swap on the 3rd.' });

    // nullSd 0.05 (the helper's default): the margin is 2·0.05 = 0.1 above the closed peak of 0.5.
    const similar = await evaluateSnapshots([await makeSnapshot(series, { tau: 0.58, surrogateP: 0.01 })]);
    expect(similar).toMatchObject({ opened: [], suppressed: 1 });
    const weakerP = await evaluateSnapshots([await makeSnapshot(series, { tau: 0.9, surrogateP: 0.045 })]);
    expect(weakerP).toMatchObject({ opened: [], suppressed: 1 });
    const stronger = await evaluateSnapshots([await makeSnapshot(series, { tau: 0.61, surrogateP: 0.04 })]);
    expect(stronger.opened).toHaveLength(1);

    // Past the quiet period anything that meets the rule opens an alert again.
    await dismissAlert(stronger.opened[0], 'statistical-fluke', analyst);
    const later = new Date(Date.now() + 49 * 3_600_000);
    const afterwards = await evaluateSnapshots([await makeSnapshot(series, { tau: 0.4, surrogateP: 0.04 })], later);
    expect(afterwards.opened).toHaveLength(1);
  });

  it('applies the quiet period after a confirmation too, so a decided warning is not raised again each cycle', async () => {
    const lead = await makeUser('lead');
    const analyst = await makeUser('analyst');
    const series = await makeSeries();
    await makeRule(series, lead, { quietPeriodHours: 24 });
    const opened = await evaluateSnapshots([await makeSnapshot(series, { tau: 0.5, surrogateP: 0.04 })]);
    await escalateAlert(opened.opened[0], analyst);
    await confirmAlert(opened.opened[0], lead);
    expect((await evaluateSnapshots([await makeSnapshot(series, { tau: 0.52, surrogateP: 0.03 })])).suppressed).toBe(1);
  });

  it('judges FDR rules of one cycle together (Benjamini–Hochberg across series)', async () => {
    const lead = await makeUser('lead');
    const seriesList = [await makeSeries(), await makeSeries(), await makeSeries()];
    for (const series of seriesList) await makeRule(series, lead, { maxSurrogateP: null, fdrLevel: 0.05 });
    // p = 0.01, 0.04, 0.03 → q = 0.03, 0.04, 0.04 (BH step-up; worked by hand from Benjamini & Hochberg 1995, Sec. 3).
    const snapshots = [
      await makeSnapshot(seriesList[0], { tau: 0.5, surrogateP: 0.01 }),
      await makeSnapshot(seriesList[1], { tau: 0.5, surrogateP: 0.04 }),
      await makeSnapshot(seriesList[2], { tau: 0.5, surrogateP: 0.03 }),
    ];
    const report = await evaluateSnapshots(snapshots);
    expect(report.opened).toHaveLength(3);
    const q = await Promise.all(snapshots.map(async (s) => (await RuleEvaluation.findOne({ where: { snapshotId: s.id } }))!.qValue));
    expect(q[0]).toBeCloseTo(0.03, 12);
    expect(q[1]).toBeCloseTo(0.04, 12);
    expect(q[2]).toBeCloseTo(0.04, 12);
  });

  it('copies the default rules onto a new series', async () => {
    const lead = await makeUser('lead');
    await createRule(null, { indicator: 'variance', minTau: 0.4, severity: 'warning' }, lead);
    const series = await createSeries({ slug: 'fresh-series', name: 'Fresh' }, lead);
    const rules = await AlertRule.findAll({ where: { seriesId: series.id } });
    expect(rules.map((r) => [r.indicator, r.minTau, r.severity])).toEqual([['variance', 0.4, 'warning']]);
  });
});
