import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';
import { ZodError } from 'zod';
import { migrateUp } from '@/migrations';
import { AuditEntry, db } from '@/models';
import { fetchSettingsHistory } from '@/lib/analysis/settings-history';
import { updateRule } from '@/lib/alerts/rules';
import { saveRuleThreshold } from '@/lib/backtest/jobs';
import { buildPeriodReport } from '@/lib/reports/period';
import { updateSeries } from '@/lib/series/registry';
import { makeRule, makeSeries, makeUser } from '../alerts/helpers';

useTempDataDir();

// Who, when and why of every settings and threshold change (issue: period reports list "changes of settings and
// thresholds (who, when, why)"). Keeping the reason beside the change is common practice for monitoring records
// a reviewer may audit; the wording of the checks below is ours.
describe('reasons for settings and threshold changes', () => {
  beforeAll(async () => {
    await db();
    await migrateUp();
  });

  it('keeps a settings change’s reason in the history, refuses a blank one, and stores none when none is sent', async () => {
    const lead = await makeUser('lead', 'Lee Head');
    const series = await makeSeries('reasoned');
    await updateSeries(series.slug, { settings: { window: 0.4 }, reason: '  shorter window after the probe moved deeper  ' }, lead);
    await expect(updateSeries(series.slug, { settings: { window: 0.3 }, reason: '   ' }, lead)).rejects.toBeInstanceOf(ZodError);
    await updateSeries(series.slug, { settings: { window: 0.45 } }, lead);
    const history = await fetchSettingsHistory(series.id);
    expect(history.map((h) => [h.settings.window, h.reason])).toEqual([
      [0.45, null],
      [0.4, 'shorter window after the probe moved deeper'],
    ]);
  });

  it('carries a rule edit’s and a threshold choice’s reason into the audit entry and the period report', async () => {
    const lead = await makeUser('lead');
    const series = await makeSeries('rule-reasons');
    const rule = await makeRule(series, lead);
    await updateRule(rule.id, { minTau: 0.5, reason: 'fewer false alarms in the ice-cover season' }, lead);
    await saveRuleThreshold(rule.id, { threshold: 0.45, jobId: null, reason: 'agreed with the water authority' }, lead);
    const update = await AuditEntry.findOne({ where: { action: 'rule.update', entityId: String(rule.id) } });
    expect(update?.details).toMatchObject({ changes: { minTau: 0.5 }, reason: 'fewer false alarms in the ice-cover season' });

    const today = new Date().toISOString().slice(0, 10);
    const report = await buildPeriodReport({ from: today, to: today }, null);
    const lines = report.changes.filter((c) => c.seriesSlug === 'rule-reasons');
    expect(lines.map((c) => [c.what.replace(/ \(#\d+\)$/, ''), c.why])).toEqual([
      ['rule created', null],
      ['rule changed', 'fewer false alarms in the ice-cover season'],
      ['rule threshold set from a backtest', 'agreed with the water authority'],
    ]);
  });
});
