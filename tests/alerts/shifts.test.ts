import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { Alert, AlertEvent, MailMessage, Mark, db } from '@/models';
import { evaluateSnapshots, explainedByMark } from '@/lib/alerts/evaluate';
import { fetchAlertDetail, fetchAlertQueue } from '@/lib/alerts/queries';
import { dismissAlert, escalateAlert, reopenAlert } from '@/lib/alerts/triage';
import { alertQueueSchema } from '@/lib/schemas/alert';
import { makeRule, makeSeries, makeSnapshot, makeUser, watch } from './helpers';

const DAY = 86_400_000;

beforeAll(async () => {
  await db();
  await migrateUp();
});

describe('abrupt-shift alerts', () => {
  it('open once per detected shift, apart from rule alerts, mailed with their own message', async () => {
    const lead = await makeUser('lead');
    const analyst = await makeUser('analyst');
    const series = await makeSeries();
    await watch(analyst, series, 'immediate');
    await makeRule(series, lead);
    const t1 = Date.UTC(2021, 0, 10);
    const shifted = (shifts: { time: number; index: number; size?: number }[], tau = 0.1) =>
      makeSnapshot(series, { tau, surrogateP: 0.5 }, { summary: { shifts } });

    const first = await evaluateSnapshots([await shifted([{ time: t1, index: 375, size: -2.5 }])]);
    expect(first.shifts).toHaveLength(1);
    expect(first.opened).toEqual([]); // the rule itself is not met: the shift alert is separate
    const alert = (await Alert.findByPk(first.shifts[0]))!;
    expect(alert).toMatchObject({ kind: 'abrupt-shift', ruleId: null, shiftTime: t1, shiftSize: -2.5, state: 'new', peakTau: null });
    const [mail] = await MailMessage.findAll({ where: { kind: 'alert-shift' } });
    expect(mail.toAddress).toBe(analyst.email);
    expect(mail.subject).toContain('abrupt shift');
    expect(mail.textBody).toContain('2021-01-10 00:00 UTC');
    expect(mail.textBody).toContain('not an early warning');

    // Re-analysis finds the same shift, also a couple of points later as more data arrive, or an earlier one: nothing new.
    expect((await evaluateSnapshots([await shifted([{ time: t1, index: 375 }])])).shifts).toEqual([]);
    expect((await evaluateSnapshots([await shifted([{ time: t1 + 2 * DAY, index: 377 }])])).shifts).toEqual([]);
    expect(
      (
        await evaluateSnapshots([
          await shifted([
            { time: t1 - 200 * DAY, index: 175 },
            { time: t1, index: 375 },
          ]),
        ])
      ).shifts,
    ).toEqual([]);
    // Failed analyses carry no shifts and open nothing.
    expect((await evaluateSnapshots([await makeSnapshot(series, { tau: null }, { status: 'error', error: 'boom' })])).shifts).toEqual([]);

    // A later shift is news again.
    const t2 = t1 + 120 * DAY;
    const later = await evaluateSnapshots([
      await shifted([
        { time: t1, index: 375 },
        { time: t2, index: 495 },
      ]),
    ]);
    expect(later.shifts).toHaveLength(1);
    expect((await Alert.findByPk(later.shifts[0]))!.shiftTime).toBe(t2);
    expect(await Alert.count({ where: { seriesId: series.id, kind: 'abrupt-shift' } })).toBe(2);
    expect(await MailMessage.count({ where: { kind: 'alert-shift' } })).toBe(2);

    // Queues show the kind; a filter by kind works; the detail has no rule.
    const queue = await fetchAlertQueue(alertQueueSchema.parse({ queue: 'triage', kind: 'abrupt-shift' }), analyst);
    expect(queue.items.map((i) => [i.kind, i.rule, i.shift?.time])).toEqual([
      ['abrupt-shift', null, t2],
      ['abrupt-shift', null, t1],
    ]);
    const detail = await fetchAlertDetail(alert.id, analyst);
    expect(detail).toMatchObject({ kind: 'abrupt-shift', rule: null, shift: { time: t1, size: -2.5 } });

    // Triage as for any alert; several shift alerts of a series may be open at once, so a reopen is not blocked.
    await escalateAlert(alert.id, analyst);
    expect(await MailMessage.count({ where: { kind: 'alert-escalated' } })).toBeGreaterThan(0);
    await dismissAlert(alert.id, 'instrument-fault', lead, { note: 'Sensor moved.' });
    await reopenAlert(alert.id, lead);
    expect((await AlertEvent.findAll({ where: { alertId: alert.id } })).map((e) => e.action)).toEqual(['open', 'escalate', 'dismiss', 'reopen']);
  });

  it('a series without rules still gets its shift alert', async () => {
    const series = await makeSeries();
    const report = await evaluateSnapshots([await makeSnapshot(series, { tau: 0.2 }, { summary: { shifts: [{ time: Date.UTC(2020, 6, 1), index: 182 }] } })]);
    expect(report.shifts).toHaveLength(1);
    expect((await Alert.findByPk(report.shifts[0]))!.shiftSize).toBeNull();
  });

  it('a shift a lead has already marked (tipping point or maintenance break) opens nothing', async () => {
    const series = await makeSeries();
    const cleaned = Date.UTC(2020, 6, 1);
    await Mark.create({ seriesId: series.id, at: cleaned, note: 'probe cleaned', kind: 'maintenance', createdBy: null });
    // Daily data, 100-point window: located up to 10 days early or within the window after the mark = explained.
    const summary = { shifts: [{ time: cleaned + 3 * DAY, index: 183 }], interval: DAY, windowPoints: 100 };
    const report = await evaluateSnapshots([await makeSnapshot(series, { tau: 0.2 }, { summary })]);
    expect(report.shifts).toEqual([]);
    expect(explainedByMark(cleaned - 10 * DAY, [cleaned], summary)).toBe(true);
    expect(explainedByMark(cleaned - 11 * DAY, [cleaned], summary)).toBe(false);
    expect(explainedByMark(cleaned + 100 * DAY, [cleaned], summary)).toBe(true);
    expect(explainedByMark(cleaned + 101 * DAY, [cleaned], summary)).toBe(false);
    // A shift well after the mark is news.
    const later = await evaluateSnapshots([
      await makeSnapshot(series, { tau: 0.2 }, { summary: { ...summary, shifts: [{ time: cleaned + 300 * DAY, index: 483 }] } }),
    ]);
    expect(later.shifts).toHaveLength(1);
  });
});
