import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-screens-');

import { migrateUp } from '@/migrations';
import { Alert, AlertRule, AnalysisSnapshot, AuditEntry, Observation, RuleEvaluation, Series, User, db } from '@/models';
import { createSeries, findSeriesChoice, hasActiveSeries, listSeries } from '@/lib/series/registry';
import { seriesListQuerySchema } from '@/lib/schemas/series';
import { refreshSeriesAnalysis } from '@/lib/analysis/snapshot';
import { fetchSeriesOverview, freshnessOf } from '@/lib/overview';
import { sparkline } from '@/lib/display/sparkline';
import { buildIndicatorTable, indicatorTableCsv } from '@/lib/reports/indicator-export';
import { previewAnalysis } from '@/lib/analysis/preview';
import { tauHistogram, thinCurves, viewFromSnapshot, type AnalysisView } from '@/lib/analysis/view';
import { fetchWorkbench } from '@/lib/series/workbench';
import { fetchAlertPage } from '@/lib/alerts/page-data';
import { fetchAlertDetail } from '@/lib/alerts/queries';
import { changePassword, renameAccount } from '@/lib/users/account';
import { fetchAuditPage } from '@/lib/audit/log';
import { hashPassword, verifyPassword } from '@/lib/auth/password';
import { simulateAr1 } from '@/lib/demo/models';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { UnprocessableError } from '@/lib/http/errors';

const DAY = 86_400_000;
const NOW = Date.UTC(2026, 5, 1);
let analyst: User;

async function seriesWith(slug: string, points: number, lastAt: number, intervalMs: number | null) {
  const series = await createSeries({ slug, name: slug, site: 'North basin', intervalMs, settings: { window: 0.5, indicators: ['ac1', 'variance'] } }, null);
  if (points) {
    const values = simulateAr1({ n: points, phi: 0.6, sigma: 1, mean: 5, seed: series.id });
    const step = intervalMs ?? DAY;
    await Observation.bulkCreate(Array.from(values, (value, i) => ({ seriesId: series.id, t: lastAt - (points - 1 - i) * step, value })));
  }
  return series;
}

beforeAll(async () => {
  await migrateUp();
  await db();
  analyst = await User.create({ email: 'a@example.test', name: 'Ana Lyst', role: 'analyst', passwordHash: await hashPassword('first-password-123') });
});

describe('overview', () => {
  it('calls a series late after three sampling intervals, or two days when irregular (our documented rule)', () => {
    expect(freshnessOf(NOW - 3 * DAY, DAY, NOW)).toBe('fresh');
    expect(freshnessOf(NOW - 3 * DAY - 1, DAY, NOW)).toBe('late');
    expect(freshnessOf(NOW - 2 * DAY, null, NOW)).toBe('fresh');
    expect(freshnessOf(NOW - 2 * DAY - 1, null, NOW)).toBe('late');
    expect(freshnessOf(null, DAY, NOW)).toBe('no-data');
  });

  it('derives state from open alerts and the latest rule evaluations, and counts the queues', async () => {
    const alerting = await seriesWith('ov-alerting', 200, NOW - DAY, DAY);
    const warning = await seriesWith('ov-warning', 200, NOW - 10 * DAY, DAY);
    const quiet = await seriesWith('ov-quiet', 200, NOW, DAY);
    await seriesWith('ov-empty', 0, NOW, DAY);
    const snapshots = new Map<number, AnalysisSnapshot>();
    for (const s of [alerting, warning, quiet]) snapshots.set(s.id, await refreshSeriesAnalysis(s, { parallel: false }));
    const rule = async (seriesId: number, severity: 'watch' | 'warning', passed: boolean) => {
      const r = await AlertRule.create({
        seriesId,
        indicator: 'ac1',
        minTau: 0.3,
        maxSurrogateP: null,
        maxKendallP: null,
        levelThreshold: null,
        severity,
        fdrLevel: null,
        createdBy: null,
      });
      await RuleEvaluation.create({
        ruleId: r.id,
        seriesId,
        snapshotId: snapshots.get(seriesId)!.id,
        tau: 0.5,
        kendallP: 0.01,
        surrogateP: null,
        qValue: null,
        level: null,
        passed,
        streak: 1,
        alertId: null,
      });
      return r;
    };
    const alertRule = await rule(alerting.id, 'watch', true);
    await rule(warning.id, 'warning', true);
    await rule(quiet.id, 'warning', false);
    const snap = snapshots.get(alerting.id)!.id;
    await Alert.create({
      seriesId: alerting.id,
      ruleId: alertRule.id,
      state: 'escalated',
      severity: 'watch',
      assigneeId: analyst.id,
      firstSnapshotId: snap,
      latestSnapshotId: snap,
      peakTau: 0.5,
      dismissReason: null,
      closedAt: null,
    });
    await Alert.create({
      seriesId: alerting.id,
      ruleId: alertRule.id,
      state: 'dismissed',
      severity: 'watch',
      assigneeId: null,
      firstSnapshotId: snap,
      latestSnapshotId: snap,
      peakTau: 0.5,
      dismissReason: 'statistical-fluke',
      closedAt: new Date(),
    });

    const overview = await fetchSeriesOverview(analyst.id, NOW);
    const bySlug = Object.fromEntries(overview.rows.map((r) => [r.slug, r]));
    expect(bySlug['ov-alerting']).toMatchObject({ state: 'alert', openAlerts: 1, freshness: 'fresh' });
    expect(bySlug['ov-warning']).toMatchObject({ state: 'warning', freshness: 'late' });
    expect(bySlug['ov-quiet']).toMatchObject({ state: 'quiet', freshness: 'fresh' });
    expect(bySlug['ov-empty']).toMatchObject({ state: 'not-analysed', freshness: 'no-data', spark: null });
    expect(overview.queues).toEqual({ triage: 0, escalated: 1, mine: 1, open: 1 });
    // tau shown is the snapshot's own Kendall tau for the rule's indicator, and the sparkline is its curve; new
    // series run surrogates by default (lib/schemas/series.ts), so the p shown is the surrogate p
    const summary = snapshots.get(quiet.id)!.summary as { kendall: Record<string, { tau: number }> };
    // ac1 is tested rising (README, "Indicator definitions"), so its tau is seen as it is.
    expect(bySlug['ov-quiet'].indicators).toEqual([
      {
        name: 'ac1',
        tau: summary.kendall.ac1.tau,
        direction: 'rising',
        orientedTau: summary.kendall.ac1.tau,
        p: expect.any(Number),
        pKind: 'surrogate',
        q: null,
      },
    ]);
    expect(bySlug['ov-quiet'].spark?.indicator).toBe('ac1');
    expect(bySlug['ov-quiet'].spark?.points).toBe(60);
    // one path command per point the rolling window has filled (the first window's points have no indicator yet)
    const ac1 = sparkline((snapshots.get(quiet.id)!.curves as { indicators: Record<string, (number | null)[]> }).indicators.ac1);
    expect(bySlug['ov-quiet'].spark?.path.match(/[ML]/g)?.length).toBe(ac1.filter((v) => v !== null).length);
    expect(ac1.filter((v) => v !== null).length).toBeGreaterThan(20);

    // the stored part is cached until the next commit; the asker's own count and the freshness are per call
    expect((await fetchSeriesOverview(null, NOW)).queues.mine).toBe(0);
    expect((await fetchSeriesOverview(analyst.id, NOW + 30 * DAY)).rows.find((r) => r.slug === 'ov-quiet')!.freshness).toBe('late');
    await Observation.create({ seriesId: warning.id, t: NOW, value: 5 });
    expect((await fetchSeriesOverview(analyst.id, NOW)).rows.find((r) => r.slug === 'ov-warning')).toMatchObject({ freshness: 'fresh', lastDataAt: NOW });
  });
});

describe('series search for pickers', () => {
  it('finds series by any part of name, slug or site, ignoring ASCII case, and takes % and _ literally', async () => {
    await createSeries({ slug: 'find-east-inflow', name: 'East Inflow', site: 'Reservoir 100% full' }, null);
    await createSeries({ slug: 'find-west-outflow', name: 'West Outflow gauge_2', site: 'Spillway' }, null);
    const slugs = async (query: Record<string, string>) => {
      const { find, limit } = seriesListQuerySchema.parse(query);
      return (await listSeries({ find, limit })).map((s) => s.slug).filter((slug) => slug.startsWith('find-'));
    };
    expect(await slugs({ find: 'INFLOW' })).toEqual(['find-east-inflow']);
    expect(await slugs({ find: 'spill' })).toEqual(['find-west-outflow']);
    expect(await slugs({ find: '  flow ' })).toEqual(['find-east-inflow', 'find-west-outflow']);
    // in SQL LIKE, % and _ are wildcards; a search for them must match only the characters themselves
    expect(await slugs({ find: '100%' })).toEqual(['find-east-inflow']);
    expect(await slugs({ find: 'e_2' })).toEqual(['find-west-outflow']);
    expect(await slugs({ find: 'e_' })).toEqual(['find-west-outflow']);
    expect(await slugs({ find: '%' })).toEqual(['find-east-inflow']);
    expect((await listSeries({ find: 'flow', limit: 1 })).map((s) => s.slug)).toEqual(['find-east-inflow']);
    expect(() => seriesListQuerySchema.parse({ limit: '0' })).toThrow();
    expect(await findSeriesChoice('find-west-outflow')).toEqual({ slug: 'find-west-outflow', name: 'West Outflow gauge_2' });
    expect(await findSeriesChoice('no-such-series')).toBeNull();

    // screens that choose a series by search only ask whether there is one to choose
    expect(await hasActiveSeries()).toBe(true);
    await Series.update({ retiredAt: new Date() }, { where: {} });
    expect(await hasActiveSeries()).toBe(false);
    await Series.update({ retiredAt: null }, { where: {} });
    expect(await hasActiveSeries()).toBe(true);
  });
});

describe('analysis views and exports', () => {
  it('saves the chart view with each snapshot, equal to the view its stored curves give, and rebuilds it for older snapshots', async () => {
    // A storage check within the project: the view is computed once at analysis time instead of on every page
    // view, so it must equal what the stored row's curves produce (the view itself is checked in the next tests).
    const series = await seriesWith('view-saved', 300, NOW, DAY);
    const { id } = await refreshSeriesAnalysis(series, { parallel: false });
    const stored = (await AnalysisSnapshot.findByPk(id))!;
    const fromCurves = JSON.parse(JSON.stringify(viewFromSnapshot(stored)));
    expect(stored.chartView).toEqual(fromCurves);
    expect((stored.chartView as unknown as AnalysisView).curves.time.length).toBeGreaterThan(100);
    expect((await fetchWorkbench('view-saved')).view).toEqual(fromCurves);
    // the alert page draws its evidence from the same saved views, while the API still answers the full curves
    const later = await refreshSeriesAnalysis(series, { parallel: false });
    const rule = await AlertRule.create({
      seriesId: series.id,
      indicator: 'ac1',
      minTau: 0.3,
      maxSurrogateP: null,
      maxKendallP: null,
      levelThreshold: null,
      severity: 'watch',
      fdrLevel: null,
      createdBy: null,
    });
    const alert = await Alert.create({
      seriesId: series.id,
      ruleId: rule.id,
      state: 'new',
      severity: 'watch',
      assigneeId: null,
      firstSnapshotId: id,
      latestSnapshotId: later.id,
      peakTau: 0.5,
      dismissReason: null,
      closedAt: null,
    });
    const page = await fetchAlertPage(alert.id, { id: analyst.id, email: analyst.email, name: analyst.name, role: 'analyst' });
    expect(page.firstView).toEqual(fromCurves);
    expect(page.latestView).toEqual((await AnalysisSnapshot.findByPk(later.id))!.chartView);
    expect((await fetchAlertDetail(alert.id)).evidence.first).toMatchObject({ curves: stored.curves });

    // a snapshot from before saved views (chart_view NULL) is drawn from its curves
    await AnalysisSnapshot.update({ chartView: null }, { where: { id } });
    expect((await AnalysisSnapshot.findByPk(id))!.chartView).toBeNull();
    expect(JSON.parse(JSON.stringify((await fetchWorkbench('view-saved')).view))).toEqual(fromCurves);
  });

  it('keeps every k-th point and the last one when thinning, and bins every surrogate tau once', () => {
    const n = 4999;
    const curves = {
      stride: 1,
      time: Array.from({ length: n }, (_, i) => i),
      value: [],
      trend: [],
      residual: [],
      indicators: { ac1: Array.from({ length: n }, (_, i) => i) },
      surrogateTaus: {},
      sensitivity: null,
    };
    const thin = thinCurves({ ...curves, value: curves.time, trend: curves.time, residual: curves.time }, 2000);
    expect(thin.stride).toBe(3);
    expect(thin.time[1]).toBe(3);
    expect(thin.time[thin.time.length - 1]).toBe(n - 1);
    expect(thin.time.length).toBeLessThanOrEqual(2000);
    const taus = Array.from({ length: 199 }, (_, i) => -0.9 + (1.8 * i) / 198);
    const bins = tauHistogram(taus, 0.95);
    expect(bins.length).toBe(15); // ⌈√199⌉ = 15, square-root choice (common practice)
    expect(bins.reduce((sum, b) => sum + b.count, 0)).toBe(199);
    expect(bins[bins.length - 1].to).toBeCloseTo(0.95, 12);
  });

  it('draws every k-th point of the full-resolution indicator table to chart precision, with its settings in the CSV', async () => {
    const series = await seriesWith('export-check', 3000, NOW, DAY);
    // The whole record (a new series' default span is the latest 1,000 points).
    await series.update({ settings: { ...series.settings, span: null } });
    const snapshot = await refreshSeriesAnalysis(series, { parallel: false });
    const table = await buildIndicatorTable(series);
    expect(table.source).toBe('snapshot');
    expect(table.rows.length).toBe(3000);
    const view = viewFromSnapshot(snapshot)!;
    // Stored: every 2nd of 3,000 points (at most 2,000 kept); drawn: every 3rd of those 1,500 (at most 720).
    expect(view.curves.stride).toBe(6);
    const ac1 = table.columns.indexOf('ac1');
    view.curves.time.forEach((t, k) => {
      const row = table.rows[Math.min(k * view.curves.stride, 2999)];
      expect(row[0]).toBe(new Date(t).toISOString());
      const stored = view.curves.indicators.ac1![k];
      if (stored === null) expect(row[ac1]).toBeNull();
      // A drawn point carries 6 significant digits, so it is within half a unit of the 6th digit of the table's value.
      else expect(Math.abs((row[ac1] as number) - stored)).toBeLessThanOrEqual(5e-6 * Math.abs(row[ac1] as number));
    });
    const csv = indicatorTableCsv(table);
    expect(csv.split('\n')[2]).toBe(`# settings ${JSON.stringify(table.settings)}`);
    expect(csv).toContain('\ntime_utc,value,trend,residual,variance,ac1\n');
  });

  it('exports the values that come with an indicator beside it: the restoring rate\u2019s standard error, the LM test\u2019s p', async () => {
    const series = await seriesWith('companion-export', 600, NOW, DAY);
    const table = await buildIndicatorTable(series, analysisSettingsSchema.parse({ indicators: ['restoring-rate', 'ch'], window: 0.5, surrogates: 0 }));
    const columns = table.columns.slice(4);
    expect(columns).toEqual(expect.arrayContaining(['restoring-rate', 'ch', 'restoring-rate.standardError', 'ch.p']));
    const last = table.rows[table.rows.length - 1];
    const se = last[table.columns.indexOf('restoring-rate.standardError')] as number;
    const p = last[table.columns.indexOf('ch.p')] as number;
    expect(se).toBeGreaterThan(0);
    expect(p).toBeGreaterThanOrEqual(0);
    expect(p).toBeLessThanOrEqual(1);
  });

  it('previews other settings without saving them and caps surrogates at 199', async () => {
    const series = await seriesWith('preview-check', 400, NOW, DAY);
    const before = await AnalysisSnapshot.count();
    const view = await previewAnalysis(series, analysisSettingsSchema.parse({ window: 0.3, surrogates: 5000, indicators: ['ac1'] }));
    expect(await AnalysisSnapshot.count()).toBe(before);
    expect(view.windowPoints).toBe(Math.round(0.3 * 400));
    expect(view.significance.ac1?.count).toBe(199);
    await expect(previewAnalysis(series, analysisSettingsSchema.parse({ window: 0.01 }))).rejects.toBeInstanceOf(UnprocessableError);
  });
});

describe('account and audit', () => {
  const actor = () => ({ id: analyst.id, email: analyst.email, name: analyst.name, role: analyst.role });

  it('changes a password only with the current one, and audits both changes', async () => {
    await expect(changePassword(actor(), { currentPassword: 'wrong-password-000', newPassword: 'second-password-456' })).rejects.toBeInstanceOf(
      UnprocessableError,
    );
    await changePassword(actor(), { currentPassword: 'first-password-123', newPassword: 'second-password-456' });
    await analyst.reload();
    expect(await verifyPassword('second-password-456', analyst.passwordHash)).toBe(true);
    await renameAccount(actor(), { name: 'Ana L.' });
    const actions = (await AuditEntry.findAll({ where: { actorId: analyst.id } })).map((e) => e.action);
    expect(actions).toEqual(expect.arrayContaining(['account.password-change', 'account.rename']));
  });

  it('pages the audit log newest first', async () => {
    const all = await fetchAuditPage({ page: 1, pageSize: 200 });
    const page2 = await fetchAuditPage({ page: 2, pageSize: 3 });
    expect(page2.total).toBe(all.total);
    expect(page2.items.map((i) => i.id)).toEqual(all.items.slice(3, 6).map((i) => i.id));
    expect(all.items[0].id).toBeGreaterThan(all.items[1].id);
  });
});
