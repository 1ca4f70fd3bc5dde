import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { Alert, AlertEvent, MailMessage, Observation, WebhookDelivery, db } from '@/models';
import { registerWebhook } from '@/lib/webhooks/admin';
import { checkFreshness, freshnessOf, lateAfterMs, LATE_AFTER_INTERVALS } from '@/lib/alerts/lateness';
import { fetchSeriesOverview } from '@/lib/overview';
import { reopenAlert } from '@/lib/alerts/triage';
import { presentSeries, updateSeries } from '@/lib/series/registry';
import { seriesUpdateSchema } from '@/lib/schemas/series';
import { makeSeries, makeSnapshot, makeUser, watch } from './helpers';

const DAY = 86_400_000;
const T0 = Date.UTC(2026, 0, 1);

beforeAll(async () => {
  await db();
  await migrateUp();
});

async function deliver(seriesId: number, from: number, days: number): Promise<void> {
  await Observation.bulkCreate(Array.from({ length: days }, (_, i) => ({ seriesId, t: from + i * DAY, value: i })));
}

describe('lateness: one definition', () => {
  it('derives the allowance from the interval unless the series sets its own', () => {
    // Our convention (LATE_AFTER_INTERVALS = 3 intervals), as the overview has always shown it.
    expect(lateAfterMs(DAY)).toBe(LATE_AFTER_INTERVALS * DAY);
    expect(lateAfterMs(null)).toBe(2 * DAY);
    expect(lateAfterMs(DAY, 10 * DAY)).toBe(10 * DAY);
    expect(freshnessOf(T0, DAY, T0 + 3 * DAY)).toBe('fresh');
    expect(freshnessOf(T0, DAY, T0 + 3 * DAY + 1)).toBe('late');
    expect(freshnessOf(T0, DAY, T0 + 3 * DAY + 1, 5 * DAY)).toBe('fresh');
  });
});

describe('data-late alerts', () => {
  it('open once, mail watchers once, and close by themselves when data return', async () => {
    const analyst = await makeUser('analyst');
    const admin = await makeUser('admin');
    await registerWebhook(
      { id: admin.id, email: admin.email, name: admin.name, role: 'admin' },
      { url: 'http://127.0.0.1:9/hook', events: ['data.late'], description: '' },
    );
    const digestReader = await makeUser('viewer');
    const bystander = await makeUser('analyst');
    const series = await makeSeries();
    await watch(analyst, series, 'immediate');
    await watch(digestReader, series, 'digest');
    await watch(bystander, series, 'none');
    await makeSnapshot(series, { tau: 0.1, surrogateP: 0.5 });
    await deliver(series.id, T0, 30);
    const last = T0 + 29 * DAY;

    // Within the allowance: nothing.
    expect((await checkFreshness(last + 3 * DAY)).opened).toEqual([]);
    // Past it: one alert, mailed to the immediate watcher (the digest reader finds it in the digest), not to the bystander.
    const late = last + 3 * DAY + 1;
    const first = await checkFreshness(late);
    expect(first.opened).toHaveLength(1);
    const alert = (await Alert.findByPk(first.opened[0]))!;
    expect(alert).toMatchObject({ kind: 'data-late', ruleId: null, state: 'new', dataLastAt: last, dataBackAt: null });
    const mails = await MailMessage.findAll({ where: { kind: 'alert-data-late' }, order: [['id', 'ASC']] });
    expect(mails.map((m) => m.toAddress)).toEqual([analyst.email]);
    expect(mails[0].subject).toContain('Data late');
    expect(mails[0].textBody).toContain('3 d'); // silent for 3 days and a millisecond, late after 3 days

    // Later passes while still silent: no second alert, no second mail. The overview says late too.
    expect((await checkFreshness(late + DAY)).opened).toEqual([]);
    expect((await checkFreshness(late + 2 * DAY)).opened).toEqual([]);
    expect(await Alert.count({ where: { seriesId: series.id, kind: 'data-late' } })).toBe(1);
    expect(await MailMessage.count({ where: { kind: 'alert-data-late' } })).toBe(1);
    // Other systems hear of it once too: one data.late delivery queued for the subscribed endpoint.
    const deliveries = await WebhookDelivery.findAll({ where: { event: 'data.late' } });
    expect(deliveries).toHaveLength(1);
    expect(JSON.parse(deliveries[0].body)).toMatchObject({ event: 'data.late', severity: 'warning', series: { slug: series.slug } });
    const overview = await fetchSeriesOverview(null, late + DAY);
    expect(overview.rows.find((r) => r.id === series.id)!.freshness).toBe('late');

    // Data return: the alert closes itself, the timeline says so, the watchers hear once.
    const back = last + 6 * DAY;
    await deliver(series.id, back, 2);
    const returned = await checkFreshness(back + DAY + 1000);
    expect(returned.returned).toEqual([alert.id]);
    await alert.reload();
    expect(alert).toMatchObject({ state: 'dismissed', dataBackAt: back, dismissReason: 'data-gap-or-artefact' });
    expect(alert.closedAt).not.toBeNull();
    const events = await AlertEvent.findAll({ where: { alertId: alert.id }, order: [['id', 'ASC']] });
    expect(events.map((e) => e.action)).toEqual(['open', 'data-returned']);
    expect(events[1].detail).toContain('closed by itself');
    expect(await MailMessage.count({ where: { kind: 'alert-data-back' } })).toBe(1);
    expect((await checkFreshness(back + DAY + 2000)).returned).toEqual([]);
    expect(await MailMessage.count({ where: { kind: 'alert-data-back' } })).toBe(1);

    // Triaged like the others: a lead may reopen it.
    const lead = await makeUser('lead');
    expect((await reopenAlert(alert.id, lead)).state).toBe('new');

    // A new silence is a new alert.
    const next = await checkFreshness(back + DAY + 3 * DAY + 1);
    expect(next.opened).toHaveLength(1);
    expect((await Alert.findByPk(next.opened[0]))!.dataLastAt).toBe(back + DAY);
  });

  it('asks nobody again about a silence an analyst dismissed while it lasts, and respects the series setting', async () => {
    const analyst = await makeUser('analyst');
    const lead = await makeUser('lead');
    const series = await makeSeries();
    // A lead sets the series' own allowance through the series update every screen and the API use.
    expect(seriesUpdateSchema.safeParse({ lateAfterMs: 1000 }).success).toBe(false);
    expect(presentSeries(await updateSeries(series.slug, { lateAfterMs: 10 * DAY }, lead)).lateAfterMs).toBe(10 * DAY);
    await series.reload();
    await makeSnapshot(series, { tau: 0.1, surrogateP: 0.5 });
    await deliver(series.id, T0, 5);
    const last = T0 + 4 * DAY;
    expect((await checkFreshness(last + 5 * DAY)).opened).toEqual([]);
    const [id] = (await checkFreshness(last + 10 * DAY + 1)).opened;
    expect(id).toBeDefined();
    const { dismissAlert } = await import('@/lib/alerts/triage');
    await dismissAlert(id, 'instrument-fault', analyst, { note: 'logger serviced' });
    expect((await checkFreshness(last + 20 * DAY)).opened).toEqual([]);
    // When data return, the decided alert records it without changing the analyst's decision.
    await deliver(series.id, last + 21 * DAY, 1);
    expect((await checkFreshness(last + 21 * DAY + 1)).returned).toEqual([id]);
    const alert = (await Alert.findByPk(id))!;
    expect(alert).toMatchObject({ state: 'dismissed', dismissReason: 'instrument-fault', dataBackAt: last + 21 * DAY });
  });

  it('waits for a first analysis before it alerts a series, and ignores series without data', async () => {
    const series = await makeSeries();
    const empty = await makeSeries();
    await deliver(series.id, T0, 3);
    const report = await checkFreshness(T0 + 30 * DAY);
    expect(report.unanalysed).toContain(series.id);
    expect(report.unanalysed).not.toContain(empty.id);
    expect(await Alert.count({ where: { seriesId: [series.id, empty.id] } })).toBe(0);
  });
});
