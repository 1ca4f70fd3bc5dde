import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { db } from '@/models';
import { judgeRule } from '@/lib/alerts/evaluate';
import { previewDraftRule, previewRule, type PreviewRule } from '@/lib/alerts/rule-preview';
import { RULE_TEMPLATES } from '@/lib/alerts/rule-templates';
import { ruleCreateSchema, rulePreviewSchema } from '@/lib/schemas/rule';
import { makeRule, makeSeries, makeSnapshot, makeUser } from '../alerts/helpers';
import type { Actor } from '@/lib/auth/roles';

let lead: Actor;
beforeAll(async () => {
  await db();
  await migrateUp();
  lead = await makeUser('lead');
});

const summary = {
  kendall: { ac1: { tau: 0.62, p: 0.001, direction: 'rising' as const } },
  significance: { ac1: { p: 0.02, count: 99, method: 'ar1', direction: 'rising' as const, nullSd: 0.1 } },
  latest: { ac1: { time: 0, value: 0.85 } },
};
const ac1Rule: PreviewRule = {
  indicator: 'ac1',
  direction: 'rising',
  minTau: 0.3,
  maxSurrogateP: 0.05,
  levelThreshold: null,
  levelDirection: 'above',
  fdrLevel: null,
  persistence: 1,
};

describe('previewRule (pure)', () => {
  it('agrees with judgeRule, the live judgement, on every template and on edited thresholds', () => {
    for (const template of RULE_TEMPLATES) {
      const rule = ruleCreateSchema.parse(template.rule);
      for (const qValue of [null, 0.04, 0.3]) {
        const preview = previewRule(rule, summary, qValue);
        const live = judgeRule(rule, summary, qValue);
        expect(preview.judgement, template.key).toEqual(live);
        expect(preview.verdict).toBe(live.cannotJudge ? 'cannot-judge' : live.passed ? 'passes' : 'fails');
        // one worded check per configured test, and the checks fail exactly when the judgement lists failures
        if (!live.cannotJudge) expect(preview.checks.some((c) => !c.passed)).toBe(live.failed.length > 0);
      }
    }
  });

  it('words each test with the number it met or missed (tau 0.62 vs 0.3, p 0.02 vs 0.05, level 0.85 vs 0.9)', () => {
    const preview = previewRule({ ...ac1Rule, levelThreshold: 0.9 }, summary);
    expect(preview.verdict).toBe('fails');
    expect(preview.checks.map((c) => c.passed)).toEqual([true, true, false]);
    expect(preview.checks[0].observed).toContain('0.62');
    expect(preview.headline).toMatch(/latest value not at or above 0.9/);
  });

  it('passes when every test does, and says a persistent rule needs more than this one analysis', () => {
    const preview = previewRule({ ...ac1Rule, persistence: 3 }, summary);
    expect(preview.verdict).toBe('passes');
    expect(preview.persistenceNote).toMatch(/3 analyses in a row/);
    expect(previewRule(ac1Rule, summary).persistenceNote).toBeNull();
  });

  it('cannot judge an indicator the analysis does not compute, and says why', () => {
    const preview = previewRule({ ...ac1Rule, indicator: 'variance' }, summary);
    expect(preview.verdict).toBe('cannot-judge');
    expect(preview.headline).toMatch(/variance is not among the computed indicators/);
    expect(preview.checks).toEqual([]);
  });
});

describe('previewDraftRule (on a stored series)', () => {
  it('judges the draft on the latest snapshot without saving anything', async () => {
    const series = await makeSeries();
    expect(await previewDraftRule(series.id, ruleCreateSchema.parse({ indicator: 'ac1', minTau: 0.3 }), null)).toEqual({
      snapshot: null,
      preview: null,
      refused: {},
    });
    await makeSnapshot(series, { tau: 0.1, surrogateP: 0.4 });
    const latest = await makeSnapshot(series, { tau: 0.7, surrogateP: 0.01 });
    const { snapshot, preview } = await previewDraftRule(series.id, ruleCreateSchema.parse({ indicator: 'ac1', minTau: 0.3, maxSurrogateP: 0.05 }), null);
    expect(snapshot?.id).toBe(latest.id);
    expect(preview?.verdict).toBe('passes');
  });

  it('reports a failed latest analysis instead of judging an older one', async () => {
    const series = await makeSeries();
    await makeSnapshot(series, { tau: 0.7, surrogateP: 0.01 });
    await makeSnapshot(series, { tau: null }, { status: 'error', error: 'record too short for the window' });
    const result = await previewDraftRule(series.id, ruleCreateSchema.parse({ indicator: 'ac1', minTau: 0.3 }), null);
    expect(result.preview).toBeNull();
    expect(result.refused._?.[0]).toMatch(/too short/);
    expect(result.snapshot).toMatchObject({ status: 'error', error: 'record too short for the window' });
  });

  it('a false-discovery draft gets its q-value within the family of stored FDR rules, leaving out the rule it replaces', async () => {
    const series = await makeSeries();
    await makeSnapshot(series, { tau: 0.7, surrogateP: 0.01 });
    const stored = await makeRule(series, lead, { maxSurrogateP: null, fdrLevel: 0.1 });
    const draft = ruleCreateSchema.parse({ indicator: 'ac1', minTau: 0.3, fdrLevel: 0.1 });
    // Replacing the only FDR rule: the family is the draft alone, so q = p = 0.01 (Benjamini & Hochberg 1995, m = 1).
    const alone = await previewDraftRule(series.id, draft, stored.id);
    expect(alone.preview?.judgement.qValue).toBeCloseTo(0.01, 12);
    expect(alone.preview?.verdict).toBe('passes');
  });

  it('says before any save what the save would refuse: a p below the surrogate floor, an indicator not computed', async () => {
    const series = await makeSeries();
    await series.update({ settings: { window: 0.5, detrend: 'gaussian', bandwidth: 0.1, surrogates: 19, indicators: ['ac1', 'variance'] } });
    await makeSnapshot(series, { tau: 0.7, surrogateP: 0.05, count: 19 });
    // 19 surrogates: the smallest Monte Carlo p is 1/(19 + 1) = 0.05 (Davison & Hinkley 1997, Sec. 4.2.1, from memory), so p ≤ 0.01 can never pass.
    const { refused } = await previewDraftRule(series.id, ruleCreateSchema.parse({ indicator: 'recovery', minTau: 0.3, maxSurrogateP: 0.01 }), null);
    expect(Object.keys(refused).sort()).toEqual(['indicator', 'maxSurrogateP']);
    expect(refused.indicator[0]).toMatch(/does not compute recovery rate/);
    expect(refused.maxSurrogateP[0]).toMatch(/1\/20 = 0.050/);
  });

  it('the preview body is validated by the rule schema: a Kendall p gate is refused', () => {
    expect(rulePreviewSchema.safeParse({ rule: { indicator: 'ac1', minTau: 0.3, maxKendallP: 0.05 } }).success).toBe(false);
    expect(rulePreviewSchema.parse({ rule: { indicator: 'ac1', minTau: 0.3 } }).replacing).toBeNull();
  });
});
