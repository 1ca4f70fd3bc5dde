import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-site-rules-');

const { migrateUp } = await import('@/migrations');
const { Alert, AlertRule, MailMessage, SiteRuleEvaluation, SiteSnapshot, User, db } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { createSite } = await import('@/lib/sites/registry');
const { ingestObservations } = await import('@/lib/intake/pipeline');
const { runAnalysisCycle } = await import('@/jobs/analysis');
const { createSiteRule, evaluateSiteRules, siteRuleStatuses } = await import('@/lib/alerts/site-rules');
const { createRule, listRules, updateRule } = await import('@/lib/alerts/rules');
const { fetchAlertDetail, fetchAlertQueue } = await import('@/lib/alerts/queries');
const { alertEvidence } = await import('@/lib/alerts/evidence');
const { acknowledgeAlert, dismissAlert } = await import('@/lib/alerts/triage');
const { newAlertMail } = await import('@/lib/mail/templates');
const { setWatch } = await import('@/lib/mail/watches');
const { fetchSitePage, siteOfSeries } = await import('@/lib/sites/page-data');
const { fetchSeriesOverview } = await import('@/lib/overview');
const { alertQueueSchema } = await import('@/lib/schemas/alert');
const { simulateAr1 } = await import('@/lib/demo/models');
const { requestBacktest } = await import('@/lib/backtest/jobs');

const HOUR = 3_600_000;
const T0 = Date.UTC(2024, 0, 1);
const csvOf = (times: number[], values: ArrayLike<number>) => `time,value\n${times.map((t, i) => `${new Date(t).toISOString()},${values[i]}`).join('\n')}\n`;

type Lead = { id: number; role: 'lead'; name: string };
let lead: Lead;
let analyst: { id: number; role: 'analyst'; name: string };
let siteId = 0;
const series: { id: number; slug: string }[] = [];
let hour = 0;

/** The next `count` hourly readings of the site's two sensors: a shared slow mode (AR(1), Box et al. 2015, Sec. 3.2) plus each sensor's own noise. */
async function deliver(count: number, seed: number) {
  const common = simulateAr1({ n: count, phi: 0.8, sigma: 1, seed });
  const times = Array.from({ length: count }, (_, i) => T0 + (hour + i) * HOUR);
  hour += count;
  for (const [k, s] of series.entries()) {
    const own = simulateAr1({ n: count, phi: 0.3, sigma: 0.5, seed: seed + 10 * (k + 1) });
    const values = Float64Array.from(common, (c, i) => 10 * (k + 1) + c + own[i]);
    const run = await ingestObservations({ series: s as never, source: 'push', csv: csvOf(times, values) });
    expect(run.status).toBe('succeeded');
  }
}

describe('rules on the site-level indicators', () => {
  beforeAll(async () => {
    await migrateUp();
    await db();
    lead = (await User.create({ email: 'lead@example.test', name: 'Lea D', role: 'lead', passwordHash: 'x' })) as unknown as Lead;
    analyst = (await User.create({ email: 'analyst@example.test', name: 'Ana L', role: 'analyst', passwordHash: 'x' })) as never;
    const site = await createSite({ slug: 'mooring', name: 'Mooring' }, lead);
    siteId = site.id;
    for (const slug of ['upper', 'lower']) series.push(await createSeries({ slug, name: `${slug} sensor`, intervalMs: HOUR, siteId }, null));
    const watcher = await User.create({ email: 'watcher@example.test', name: 'Wat C', role: 'viewer', passwordHash: 'x' });
    // watching one series of the site is watching the site's alerts
    await setWatch(watcher, series[1] as never, 'immediate');
    await deliver(300, 41);
  });

  it('refuses what a site rule cannot be: a series indicator, another direction, false-discovery control', async () => {
    await expect(createSiteRule(siteId, { indicator: 'ac1' as never, minTau: 0.3 }, lead)).rejects.toThrow(/indicator/i);
    await expect(createSiteRule(siteId, { indicator: 'pc1-share', minTau: 0.3, direction: 'falling' as never }, lead)).rejects.toThrow(/rising/);
    await expect(createSiteRule(siteId, { indicator: 'pc1-share', minTau: 0.3, fdrLevel: 0.1 as never }, lead)).rejects.toThrow(/own surrogate p/);
    // and a series rule keeps to the series indicators
    const seriesRule = await createRule(series[0].id, { indicator: 'ac1', minTau: 0.3 }, lead);
    await expect(updateRule(seriesRule.id, { indicator: 'pc1-share' }, lead)).rejects.toThrow();
  });

  it('judges each new site snapshot once, builds to its persistence, then opens one alert on the site and mails the watchers of its series', async () => {
    // minTau −1 is met by any defined trend: the test is of the procedure, not of the indicator
    const rule = await createSiteRule(siteId, { indicator: 'pc1-variance', minTau: -1, persistence: 2, reason: 'mooring-wide coupling watch' }, lead);
    // 199 surrogates give p ≥ 1/200, so p ≤ 0.001 can never hold: judged, not met
    const never = await createSiteRule(siteId, { indicator: 'maf-ac1', minTau: -1, maxSurrogateP: 0.001 }, lead);
    expect((await listRules(null)).map((r) => r.id)).not.toContain(rule.id);
    // a backtest replays one series, which a site rule is not on
    await expect(requestBacktest(rule.id, { series: 'upper' } as never, lead)).rejects.toThrow(/replays one series/);

    await runAnalysisCycle();
    const first = await SiteSnapshot.findOne({ where: { siteId }, order: [['id', 'DESC']] });
    expect(first?.status).toBe('ok');
    const e1 = await SiteRuleEvaluation.findOne({ where: { ruleId: rule.id, siteSnapshotId: first!.id } });
    expect(e1?.outcome).toBe('building');
    // the judgement reads the site snapshot's own numbers
    const summary = first!.summary as { kendall: Record<string, { tau: number }>; significance: Record<string, { p: number; nullSd: number }> };
    expect(e1?.tau).toBe(summary.kendall['pc1-variance'].tau);
    expect(e1?.surrogateP).toBe(summary.significance['pc1-variance'].p);
    expect(summary.significance['pc1-variance'].nullSd).toBeGreaterThan(0);
    const n1 = await SiteRuleEvaluation.findOne({ where: { ruleId: never.id, siteSnapshotId: first!.id } });
    expect(n1?.outcome).toMatch(/^not-met: surrogate p above 0.001/);
    // judged once: another pass over the same snapshot (a second scheduler) adds nothing
    expect((await evaluateSiteRules()).evaluated).toBe(0);
    expect(await Alert.count()).toBe(0);
    expect((await siteOfSeries(siteId))?.openSiteAlerts).toBeNull();

    await deliver(6, 42);
    await runAnalysisCycle();
    const second = await SiteSnapshot.findOne({ where: { siteId }, order: [['id', 'DESC']] });
    expect(second!.id).toBeGreaterThan(first!.id);
    const alerts = await Alert.findAll({ where: { siteId } });
    expect(alerts).toHaveLength(1);
    const [alert] = alerts;
    expect(alert).toMatchObject({ kind: 'site-slowing-down', seriesId: null, ruleId: rule.id, state: 'new', firstSnapshotId: second!.id });
    const mails = await MailMessage.findAll({ where: { kind: 'alert-new' } });
    expect(mails.map((m) => m.toAddress)).toEqual(['watcher@example.test']);
    expect(mails[0].subject).toMatch(/site Mooring/);
    expect(mails[0].textBody).toMatch(/upper sensor, lower sensor analysed together/);

    // every reader names the site: the queue, the alert, its evidence, the site page
    const queue = await fetchAlertQueue(alertQueueSchema.parse({ queue: 'triage' }), lead);
    expect(queue.items.map((i) => [i.id, i.on.kind, i.on.href, i.series])).toEqual([[alert.id, 'site', '/sites/mooring', null]]);
    const detail = await fetchAlertDetail(alert.id, lead);
    expect(detail.site?.slug).toBe('mooring');
    expect(detail.evidence.latest?.id).toBe(second!.id);
    expect(detail.evidence.evaluations.map((e) => e.outcome)).toEqual(['opened']);
    const evidence = await alertEvidence(alert);
    expect(newAlertMail(evidence).text).toMatch(/Site\s+Mooring \(mooring\)/);
    const page = await fetchSitePage('mooring', lead.id);
    expect(page.openAlerts.map((a) => [a.id, a.series])).toEqual([[alert.id, null]]);
    const statuses = await siteRuleStatuses(siteId);
    expect(statuses.find((s) => s.rule.id === rule.id)).toMatchObject({ standing: 'met', openAlert: { id: alert.id } });
    // the overview, whose rows are series, names the site with its open site alert and counts it in the queues
    const overview = await fetchSeriesOverview(lead.id);
    expect(overview.siteAlerts).toEqual([{ site: 'Mooring', siteSlug: 'mooring', count: 1, severity: rule.severity }]);
    expect(overview.queues).toMatchObject({ open: 1, triage: 1 });
    // and a member series' page says the same of its site
    expect(await siteOfSeries(siteId)).toEqual({ slug: 'mooring', name: 'Mooring', openSiteAlerts: overview.siteAlerts[0] });

    // more passing evidence extends the open alert rather than opening another
    await deliver(6, 43);
    await runAnalysisCycle();
    await alert.reload();
    expect(alert.evaluationCount).toBe(2);
    expect(await Alert.count({ where: { siteId } })).toBe(1);
  });

  it('is triaged like any alert, and a quiet period after a dismissal holds back evidence that is not clearly stronger', async () => {
    const rule = (await AlertRule.findOne({ where: { siteId, indicator: 'pc1-variance' } }))!;
    await updateRule(rule.id, { quietPeriodHours: 24, reason: 'one look a day is enough' }, lead);
    const alert = (await Alert.findOne({ where: { siteId, ruleId: rule.id } }))!;
    await acknowledgeAlert(alert.id, analyst as never);
    await dismissAlert(alert.id, 'statistical-fluke', analyst as never);
    await deliver(6, 44);
    await runAnalysisCycle();
    const latest = await SiteRuleEvaluation.findOne({ where: { ruleId: rule.id }, order: [['siteSnapshotId', 'DESC']] });
    expect(latest?.outcome).toBe('quiet-period');
    expect(await Alert.count({ where: { siteId } })).toBe(1);
    // a site rule changes within the site indicators only
    expect((await updateRule(rule.id, { indicator: 'pc1-share', reason: 'share of the first component instead' }, lead)).indicator).toBe('pc1-share');
    await expect(updateRule(rule.id, { indicator: 'ac1' }, lead)).rejects.toThrow();
  });
});
