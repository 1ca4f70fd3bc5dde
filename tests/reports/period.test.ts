import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import Papa from 'papaparse';
import { migrateUp } from '@/migrations';
import { Alert, AlertEvent, AuditEntry, Mark, Observation, SettingsChange, db } from '@/models';
import { recordAudit } from '@/lib/audit';
import { buildPeriodReport } from '@/lib/reports/period';
import { createSeries, updateSeries } from '@/lib/series/registry';
import { createSite } from '@/lib/sites/registry';
import { createSiteRule } from '@/lib/alerts/site-rules';
import { completeness, durationSummary, periodBounds, periodContaining, periodLabel, periodReportCsv, previousPeriod } from '@/lib/reports/period-shape';
import { makeRule, makeSeries, makeSnapshot, makeUser } from '../alerts/helpers';

const DAY = 86_400_000;
const jan = (day: number, hour = 0) => Date.UTC(2026, 0, day, hour);
const JANUARY = { from: '2026-01-01', to: '2026-01-31' };
const NOW = Date.UTC(2026, 1, 10);

async function at(table: string, id: number, instant: number): Promise<void> {
  const sequelize = await db();
  await sequelize.query(`UPDATE ${table} SET created_at = :t WHERE id = :id`, {
    replacements: { t: new Date(instant).toISOString().replace('T', ' ').replace('Z', ' +00:00'), id },
  });
}

async function days(seriesId: number, first: number, last: number): Promise<void> {
  await Observation.bulkCreate(Array.from({ length: last - first + 1 }, (_, i) => ({ seriesId, t: jan(first + i), value: i })));
}

describe('periods', () => {
  it('names calendar months, quarters and years in UTC', () => {
    expect(periodContaining('quarter', Date.UTC(2026, 4, 17))).toEqual({ from: '2026-04-01', to: '2026-06-30' });
    expect(periodContaining('month', Date.UTC(2024, 1, 10))).toEqual({ from: '2024-02-01', to: '2024-02-29' }); // leap year
    expect(previousPeriod('quarter', Date.UTC(2026, 0, 3))).toEqual({ from: '2025-10-01', to: '2025-12-31' });
    expect(previousPeriod('month', Date.UTC(2026, 2, 1))).toEqual({ from: '2026-02-01', to: '2026-02-28' });
    expect(periodLabel({ from: '2026-01-01', to: '2026-03-31' })).toBe('2026-Q1');
    expect(periodLabel({ from: '2026-01-01', to: '2026-12-31' })).toBe('2026');
    expect(periodLabel(JANUARY)).toBe('January 2026');
    expect(periodLabel({ from: '2026-01-05', to: '2026-01-09' })).toBe('2026-01-05 to 2026-01-09');
    expect(periodBounds(JANUARY)).toEqual({ start: jan(1), end: Date.UTC(2026, 1, 1) });
  });

  it('counts completeness and time to decision by hand', () => {
    // 26 daily values over 31 days: 26/31.
    expect(completeness(26, DAY, jan(1), jan(32))).toEqual({ expected: 31, share: 26 / 31 });
    expect(completeness(5, null, jan(1), jan(32))).toEqual({ expected: null, share: null });
    expect(durationSummary([30, 48, 6])).toEqual({ count: 3, medianHours: 30, meanHours: 28 });
    expect(durationSummary([30, 48])).toEqual({ count: 2, medianHours: 39, meanHours: 39 });
  });
});

describe('period report on a small seeded network', () => {
  beforeAll(async () => {
    await db();
    await migrateUp();
  });

  it('assembles status, completeness, late stretches, decisions, changes, marks and the caution', async () => {
    const analyst = await makeUser('analyst', 'Ana Lyst');
    const lead = await makeUser('lead', 'Lee Head');
    const north = await makeSeries('north-oxygen');
    await north.update({ site: 'North Basin' });
    const south = await makeSeries('south-level');
    await south.update({ site: 'South Arm' });
    // North: Jan 1–10 and Jan 16–31 (a 6-day silence; late after 3 daily intervals). South: every day.
    await days(north.id, 1, 10);
    await days(north.id, 16, 31);
    await days(south.id, 1, 31);
    const snapN = await makeSnapshot(north, { tau: 0.5, surrogateP: 0.01 });
    const snapS = await makeSnapshot(south, { tau: 0.5, surrogateP: 0.01 });

    const alert = async (
      seriesId: number,
      snapshotId: number,
      opened: number,
      kind: 'slowing-down' | 'abrupt-shift' = 'slowing-down',
      shiftTime: number | null = null,
    ) => {
      const a = await Alert.create({
        seriesId,
        ruleId: null,
        kind,
        shiftTime,
        state: 'new',
        severity: 'warning',
        assigneeId: null,
        firstSnapshotId: snapshotId,
        latestSnapshotId: snapshotId,
        peakTau: null,
        dismissReason: null,
        closedAt: null,
      });
      await at('alerts', a.id, opened);
      return a;
    };
    const decide = async (a: Alert, action: 'confirm' | 'dismiss', when: number, actorId: number, reason: string | null, note: string | null) => {
      await a.update({ state: action === 'confirm' ? 'confirmed' : 'dismissed', closedAt: new Date(when), dismissReason: reason });
      const e = await AlertEvent.create({ alertId: a.id, actorId, action, fromState: 'new', toState: a.state, reason, detail: note });
      await at('alert_events', e.id, when);
    };
    const a1 = await alert(north.id, snapN.id, jan(5, 10));
    await decide(a1, 'dismiss', jan(6, 16), analyst.id, 'statistical-fluke', 'one stormy week'); // 30 h
    const a2 = await alert(north.id, snapN.id, jan(20));
    await decide(a2, 'confirm', jan(22), lead.id, null, 'agreed with the field team'); // 48 h
    const a3 = await alert(north.id, snapN.id, jan(25), 'abrupt-shift', jan(24)); // undecided, open at the end
    const b1 = await alert(south.id, snapS.id, jan(3));
    await decide(b1, 'dismiss', jan(3, 6), analyst.id, 'instrument-fault', 'probe fouled'); // 6 h
    await alert(south.id, snapS.id, Date.UTC(2026, 1, 2)); // February: outside

    const first = await SettingsChange.create({ seriesId: north.id, settings: { window: 0.5, detrend: 'gaussian' }, changedBy: lead.id });
    await at('settings_changes', first.id, Date.UTC(2025, 11, 1));
    const second = await SettingsChange.create({
      seriesId: north.id,
      settings: { window: 0.4, detrend: 'gaussian' },
      changedBy: lead.id,
      reason: 'faster dynamics since the weir was lowered',
    });
    await at('settings_changes', second.id, jan(12));
    const rule = await makeRule(north, lead); // created today: outside January
    await recordAudit({ actorId: lead.id, action: 'rule.threshold', entity: 'alert_rule', entityId: rule.id, details: { before: 0.3, after: 0.4, jobId: 7 } });
    await at('audit_log', (await AuditEntry.findOne({ where: { action: 'rule.threshold' } }))!.id, jan(15));
    // A rule of another site's series stays out of a site report; one that no longer exists out of every report.
    await recordAudit({ actorId: lead.id, action: 'rule.update', entity: 'alert_rule', entityId: 999, details: { before: {}, changes: { minTau: 0.5 } } });
    // QC limits changed through the series PATCH path, with its reason; a unit fix is not a threshold change and leaves no line.
    await updateSeries('north-oxygen', { qc: { grossRange: { fail: [0, 20] } }, reason: 'limits from the maker’s sheet' }, lead);
    await updateSeries('north-oxygen', { unit: 'mg/L' }, lead);
    for (const entry of await AuditEntry.findAll({ where: { action: 'series.update' } })) await at('audit_log', entry.id, jan(18));
    await Mark.create({ seriesId: north.id, at: jan(14), note: 'probe swapped', kind: 'maintenance', createdBy: lead.id });
    await Mark.create({ seriesId: north.id, at: Date.UTC(2026, 2, 1), note: 'later', kind: 'maintenance', createdBy: lead.id });

    const report = await buildPeriodReport(JANUARY, null, NOW);
    expect(report.period).toMatchObject({ ...JANUARY, label: 'January 2026' });
    expect(report.caution).toMatch(/not forecasts/);
    const n = report.series.find((s) => s.slug === 'north-oxygen')!;
    expect(n).toMatchObject({ received: 26, expected: 31, lateStretches: 1, lateHours: 72, alertsOpened: 3, openAtEnd: 1 });
    expect(n.completeness).toBeCloseTo(26 / 31, 12);
    expect(report.series.find((s) => s.slug === 'south-level')).toMatchObject({
      received: 31,
      expected: 31,
      completeness: 1,
      lateStretches: 0,
      alertsOpened: 1,
      openAtEnd: 0,
    });
    expect(report.completeness).toEqual({ received: 57, expected: 62, share: 57 / 62 });
    expect(report.late).toEqual([
      {
        seriesSlug: 'north-oxygen',
        seriesName: 'Series north-oxygen',
        lastDataAt: new Date(jan(10)).toISOString(),
        backAt: new Date(jan(16)).toISOString(),
        silentHours: 144,
        alertId: null,
      },
    ]);

    expect(report.alerts.map((a) => a.id)).toEqual([b1.id, a1.id, a2.id, a3.id]);
    expect(report.alerts.find((a) => a.id === a1.id)).toMatchObject({
      decision: 'dismissed',
      decidedBy: 'Ana Lyst',
      reason: 'statistical-fluke',
      note: 'one stormy week',
      hoursToDecision: 30,
    });
    expect(report.alerts.find((a) => a.id === a2.id)).toMatchObject({ decision: 'confirmed', decidedBy: 'Lee Head', hoursToDecision: 48 });
    expect(report.alerts.find((a) => a.id === a3.id)).toMatchObject({ decision: null, hoursToDecision: null, kind: 'abrupt-shift' });
    expect(report.decisions).toEqual({ opened: 4, decided: 3, undecided: 1, closedBySelf: 0, medianHoursToDecision: 30, meanHoursToDecision: 28 });
    expect(report.shifts).toEqual([{ alertId: a3.id, seriesSlug: 'north-oxygen', at: new Date(jan(24)).toISOString(), size: null, stateNow: 'new' }]);

    expect(report.changes).toEqual([
      {
        at: new Date(jan(12)).toISOString(),
        who: 'Lee Head',
        seriesSlug: 'north-oxygen',
        what: 'analysis settings changed',
        detail: 'window 0.5 → 0.4',
        why: 'faster dynamics since the weir was lowered',
      },
      {
        at: new Date(jan(15)).toISOString(),
        who: 'Lee Head',
        seriesSlug: 'north-oxygen',
        what: `rule threshold set from a backtest (#${rule.id})`,
        detail: 'threshold 0.3 → 0.4',
        why: 'chosen from backtest #7',
      },
      {
        at: new Date(jan(18)).toISOString(),
        who: 'Lee Head',
        seriesSlug: 'north-oxygen',
        what: 'quality-control limits changed',
        detail: expect.stringMatching(/^grossRange null → \{"fail":\[0,20\]\}/),
        why: 'limits from the maker’s sheet',
      },
    ]);
    // The rule is active and not yet calibrated: its false-alarm rate is unknown, not zero.
    expect(report.calibrations).toEqual([
      {
        ruleId: rule.id,
        seriesSlug: 'north-oxygen',
        siteSlug: null,
        indicator: expect.any(String),
        severity: rule.severity,
        falseAlarmsPerYear: null,
        interval: null,
        calibratedAt: null,
      },
    ]);
    expect(report.marks).toEqual([
      { seriesSlug: 'north-oxygen', kind: 'maintenance', at: new Date(jan(14)).toISOString(), note: 'probe swapped', by: 'Lee Head' },
    ]);

    // One site, by name or slug: North Basin alone, its own decision times (30 h and 48 h).
    for (const site of ['North Basin', 'north-basin']) {
      const basin = await buildPeriodReport(JANUARY, site, NOW);
      expect(basin.site).toBe('North Basin');
      expect(basin.series.map((s) => s.slug)).toEqual(['north-oxygen']);
      expect(basin.decisions).toMatchObject({ opened: 3, decided: 2, medianHoursToDecision: 39, meanHoursToDecision: 39 });
    }

    // The alert table as CSV: header, one row per alert, reasons and notes quoted where needed.
    const csv = periodReportCsv(report, 'alerts');
    const parsed = Papa.parse<Record<string, string>>(csv.trim(), { header: true });
    expect(parsed.errors).toEqual([]);
    expect(parsed.meta.fields).toEqual([
      'id',
      'kind',
      'seriesSlug',
      'seriesName',
      'site',
      'severity',
      'subject',
      'openedAt',
      'stateNow',
      'decision',
      'decidedAt',
      'decidedBy',
      'reason',
      'note',
      'hoursToDecision',
    ]);
    expect(parsed.data).toHaveLength(4);
    expect(parsed.data[1]).toMatchObject({
      id: String(a1.id),
      reason: 'statistical-fluke',
      note: 'one stormy week',
      hoursToDecision: '30',
      decidedBy: 'Ana Lyst',
    });
    expect(parsed.data[3].decision).toBe('');
    expect(periodReportCsv(await buildPeriodReport({ from: '2020-01-01', to: '2020-01-31' }, null, NOW), 'alerts').split('\r\n')[0]).toBe(
      parsed.meta.fields!.join(','),
    );
  });

  it("lists a site rule among the rules of its site's reports, saying it carries no calibration", async () => {
    const lead = await makeUser('lead', 'Site Lead');
    const site = await createSite({ slug: 'west-mooring', name: 'West Mooring' }, lead);
    for (const slug of ['west-upper', 'west-lower']) await createSeries({ slug, name: slug, intervalMs: DAY, siteId: site.id }, null);
    const rule = await createSiteRule(site.id, { indicator: 'maf-ac1', minTau: 0.3, maxSurrogateP: 0.05 }, lead);
    const west = await buildPeriodReport(JANUARY, 'west-mooring', NOW);
    expect(west.calibrations).toEqual([
      {
        ruleId: rule.id,
        seriesSlug: '',
        siteSlug: 'west-mooring',
        indicator: expect.any(String),
        severity: rule.severity,
        falseAlarmsPerYear: null,
        interval: null,
        calibratedAt: null,
      },
    ]);
    // after the series rules in the network's report, and in no other site's
    const network = await buildPeriodReport(JANUARY, null, NOW);
    expect(network.calibrations.at(-1)).toMatchObject({ ruleId: rule.id, siteSlug: 'west-mooring' });
    expect(network.calibrations.slice(0, -1).every((c) => c.siteSlug === null)).toBe(true);
    expect((await buildPeriodReport(JANUARY, 'North Basin', NOW)).calibrations.map((c) => c.ruleId)).not.toContain(rule.id);
    const csv = Papa.parse<Record<string, string>>(periodReportCsv(west, 'calibrations').trim(), { header: true });
    expect(csv.data).toEqual([expect.objectContaining({ ruleId: String(rule.id), seriesSlug: '', siteSlug: 'west-mooring', falseAlarmsPerYear: '' })]);
  });

  it('counts a silence that began before the period and still runs at its end', async () => {
    const east = await makeSeries('east-turbidity');
    await east.update({ site: 'East Shore' });
    await Observation.bulkCreate(Array.from({ length: 17 }, (_, i) => ({ seriesId: east.id, t: Date.UTC(2025, 11, 20) + i * DAY, value: i }))); // Dec 20 – Jan 5
    const report = await buildPeriodReport(JANUARY, 'East Shore', NOW);
    // Received Jan 1–5 of 31 expected; silent from Jan 5 to the period's end (27 days), late from Jan 8 (24 days).
    expect(report.series).toMatchObject([{ slug: 'east-turbidity', received: 5, expected: 31, lateStretches: 1, lateHours: 576 }]);
    expect(report.late).toEqual([
      {
        seriesSlug: 'east-turbidity',
        seriesName: 'Series east-turbidity',
        lastDataAt: new Date(jan(5)).toISOString(),
        backAt: null,
        silentHours: 648,
        alertId: null,
      },
    ]);
    // February: the silence began in January and still runs at the report's moment (NOW, 10 February).
    const february = await buildPeriodReport({ from: '2026-02-01', to: '2026-02-28' }, 'East Shore', NOW);
    // Up to now: 9 daily values expected (1–10 February), none received.
    expect(february.series[0]).toMatchObject({ received: 0, expected: 9, completeness: 0, lateStretches: 1, lateHours: 9 * 24 });
  });
});
