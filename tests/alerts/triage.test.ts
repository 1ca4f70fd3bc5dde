import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { AlertEvent, AuditEntry, MailMessage, NoteRevision, db, writeTransaction, ROLES, ALERT_STATES, roleAtLeast } from '@/models';
import { createAlert } from '@/lib/alerts/open';
import { createSite } from '@/lib/sites/registry';
import { ConflictError, ForbiddenError } from '@/lib/http/errors';
import { evaluateSnapshots } from '@/lib/alerts/evaluate';
import {
  TRIAGE_POLICY,
  acknowledgeAlert,
  allowedActions,
  assignAlert,
  confirmAlert,
  dismissAlert,
  escalateAlert,
  reopenAlert,
  applyTriageAction,
} from '@/lib/alerts/triage';
import { addNote, editNote } from '@/lib/alerts/notes';
import { fetchAlertDetail, fetchAlertQueue } from '@/lib/alerts/queries';
import { alertQueueSchema, TRIAGE_ACTIONS } from '@/lib/schemas/alert';
import { makeRule, makeSeries, makeSnapshot, makeUser, watch } from './helpers';
import type { Actor } from '@/lib/auth/roles';

let analyst: Actor, other: Actor, lead: Actor, viewer: Actor;

beforeAll(async () => {
  await db();
  await migrateUp();
  analyst = await makeUser('analyst', 'Ada Analyst');
  other = await makeUser('analyst', 'Otto Other');
  lead = await makeUser('lead', 'Lena Lead');
  viewer = await makeUser('viewer');
});

async function freshAlert(): Promise<number> {
  const series = await makeSeries();
  await makeRule(series, lead);
  const report = await evaluateSnapshots([await makeSnapshot(series, { tau: 0.6, surrogateP: 0.01 })]);
  return report.opened[0];
}

describe('the triage policy', () => {
  it('is what the product promises: who may act from which state', () => {
    // Written out independently of TRIAGE_POLICY so a change to the table is a visible change to this test.
    const expected: Record<string, Record<string, string>> = {
      acknowledge: { new: 'analyst' },
      assign: { new: 'analyst', acknowledged: 'analyst', escalated: 'analyst' },
      escalate: { new: 'analyst', acknowledged: 'analyst' },
      confirm: { acknowledged: 'lead', escalated: 'lead' },
      dismiss: { new: 'analyst', acknowledged: 'analyst', escalated: 'lead' },
      reopen: { confirmed: 'lead', dismissed: 'lead' },
    };
    for (const action of TRIAGE_ACTIONS) expect(TRIAGE_POLICY[action].from).toEqual(expected[action]);
    for (const state of ALERT_STATES)
      for (const role of ROLES) {
        const allowed = TRIAGE_ACTIONS.filter((a) => expected[a][state] && roleAtLeast(role, expected[a][state] as never));
        expect(allowedActions(state, role)).toEqual(allowed);
      }
    expect(allowedActions('new', 'viewer')).toEqual([]);
  });

  it('walks new → acknowledged → escalated → confirmed, recording each step and mailing leads, then watchers', async () => {
    const id = await freshAlert();
    const { series } = await fetchAlertDetail(id);
    const watcher = await makeUser('viewer');
    await watch(watcher, series!, 'digest');

    const ack = await acknowledgeAlert(id, analyst);
    expect(ack).toMatchObject({ state: 'acknowledged', assigneeId: analyst.id, version: 2 });
    await escalateAlert(id, analyst, { note: 'Looks real; second sensor agrees.' });
    const escalations = await MailMessage.findAll({ where: { kind: 'alert-escalated' } });
    expect(escalations.map((m) => m.toAddress)).toEqual([lead.email]);
    expect(escalations[0].textBody).toContain('second sensor agrees');

    await expect(confirmAlert(id, analyst)).rejects.toBeInstanceOf(ForbiddenError);
    const confirmed = await confirmAlert(id, lead, { note: 'Signed off.' });
    expect(confirmed.state).toBe('confirmed');
    const signOffs = await MailMessage.findAll({ where: { kind: 'alert-confirmed' } });
    expect(signOffs.map((m) => m.toAddress)).toEqual([watcher.email]);

    const detail = await fetchAlertDetail(id, lead);
    expect(detail.timeline.map((e) => [e.action, e.fromState, e.toState, e.actor?.name ?? null])).toEqual([
      ['open', null, 'new', null],
      ['acknowledge', 'new', 'acknowledged', 'Ada Analyst'],
      ['escalate', 'acknowledged', 'escalated', 'Ada Analyst'],
      ['confirm', 'escalated', 'confirmed', 'Lena Lead'],
    ]);
    expect(detail.closedAt).not.toBeNull();
    expect(detail.allowedActions).toEqual(['reopen']);
    const audit = await AuditEntry.findAll({ where: { entity: 'alert', entityId: String(id) }, order: [['id', 'ASC']] });
    expect(audit.map((a) => a.action)).toEqual(['alert.open', 'alert.acknowledge', 'alert.escalate', 'alert.confirm']);

    const reopened = await reopenAlert(id, lead);
    expect(reopened).toMatchObject({ state: 'acknowledged', assigneeId: analyst.id });
  });

  it('refuses an action that does not apply to the current state with 409', async () => {
    const id = await freshAlert();
    await expect(confirmAlert(id, lead)).rejects.toBeInstanceOf(ConflictError);
    await expect(reopenAlert(id, lead)).rejects.toBeInstanceOf(ConflictError);
    await dismissAlert(id, 'data-gap-or-artefact', analyst, { note: 'Logger offline for a week.' });
    await expect(acknowledgeAlert(id, analyst)).rejects.toBeInstanceOf(ConflictError);
    const event = await AlertEvent.findOne({ where: { alertId: id, action: 'dismiss' } });
    expect(event).toMatchObject({ reason: 'data-gap-or-artefact', detail: 'Logger offline for a week.' });
  });

  it('leaves a dismissal of an escalated alert to leads', async () => {
    const id = await freshAlert();
    await escalateAlert(id, analyst);
    await expect(dismissAlert(id, 'statistical-fluke', analyst)).rejects.toBeInstanceOf(ForbiddenError);
    expect((await dismissAlert(id, 'statistical-fluke', lead)).state).toBe('dismissed');
  });

  it('needs a reason for a dismissal and a note for "other"', async () => {
    const id = await freshAlert();
    await expect(applyTriageAction(id, { action: 'dismiss' }, analyst)).rejects.toThrow(/reason/);
    await expect(dismissAlert(id, 'other', analyst)).rejects.toThrow(/other/);
  });

  it('assigns only to active analysts or above; a new alert becomes acknowledged', async () => {
    const id = await freshAlert();
    await expect(assignAlert(id, viewer.id, analyst)).rejects.toThrow(/active analyst/);
    expect(await assignAlert(id, other.id, analyst)).toMatchObject({ state: 'acknowledged', assigneeId: other.id });
  });

  it('lets exactly one of two concurrent triage actions win; the other gets 409', async () => {
    const id = await freshAlert();
    const results = await Promise.allSettled([acknowledgeAlert(id, analyst), acknowledgeAlert(id, other)]);
    expect(results.filter((r) => r.status === 'fulfilled')).toHaveLength(1);
    const rejected = results.filter((r): r is PromiseRejectedResult => r.status === 'rejected');
    expect(rejected).toHaveLength(1);
    expect(rejected[0].reason).toBeInstanceOf(ConflictError);
    // A client naming the version it saw loses to a change made since.
    await expect(escalateAlert(id, analyst, { version: 1 })).rejects.toBeInstanceOf(ConflictError);
    expect((await escalateAlert(id, analyst, { version: 2 })).state).toBe('escalated');
  });
});

describe('notes', () => {
  it('keeps every earlier wording; only the author may edit', async () => {
    const id = await freshAlert();
    const note = await addNote(id, { body: 'Checked the logger: fine.' }, analyst);
    await expect(editNote(note.id, { body: 'Hijacked' }, other)).rejects.toBeInstanceOf(ForbiddenError);
    await editNote(note.id, { body: 'Checked the logger and the cable: fine.' }, analyst);
    expect((await NoteRevision.findAll({ where: { noteId: note.id } })).map((r) => r.body)).toEqual(['Checked the logger: fine.']);
    const detail = await fetchAlertDetail(id);
    expect(detail.notes[0]).toMatchObject({ body: 'Checked the logger and the cable: fine.', edited: true, author: { name: 'Ada Analyst' } });
  });
});

describe('queues', () => {
  it('lists, filters, counts and pages', async () => {
    const series = await makeSeries('queue-series');
    await makeRule(series, lead);
    await makeRule(series, lead, { indicator: 'variance', severity: 'warning' });
    const snap = await makeSnapshot(series, { tau: 0.6, surrogateP: 0.01 });
    // variance evidence on the same snapshot so the second rule fires too
    snap.summary = {
      ...snap.summary,
      kendall: { ...(snap.summary.kendall as object), variance: { tau: 0.7, p: 0.001 } },
      significance: { ...(snap.summary.significance as object), variance: { p: 0.01, count: 100, method: 'ar1' } },
    };
    await snap.save();
    const { opened } = await evaluateSnapshots([snap]);
    expect(opened).toHaveLength(2);
    await acknowledgeAlert(opened[1], other);

    const q = (input: Record<string, unknown>) => fetchAlertQueue(alertQueueSchema.parse({ series: 'queue-series', ...input }), other);
    const triage = await q({ queue: 'triage' });
    expect(triage.total).toBe(2);
    expect(triage.counts).toEqual({ triage: 2, escalated: 0, mine: 1, closed: 0 });
    expect((await q({ queue: 'mine' })).items.map((i) => i.id)).toEqual([opened[1]]);
    expect((await q({ queue: 'triage', severity: 'warning' })).items.map((i) => i.rule?.indicator)).toEqual(['variance']);
    expect((await q({ queue: 'triage', state: 'new' })).items.map((i) => i.id)).toEqual([opened[0]]);
    expect((await q({ queue: 'triage', sort: 'tau' })).items.map((i) => i.peakTau)).toEqual([0.7, 0.6]);
    const page2 = await q({ queue: 'triage', pageSize: 1, page: 2, sort: 'oldest' });
    expect(page2.items.map((i) => i.id)).toEqual([opened[1]]);
    expect(page2.total).toBe(2);
    expect((await q({ queue: 'triage', age: '>1d' })).total).toBe(0);
    expect((await q({ queue: 'triage', age: '1d' })).total).toBe(2);
    expect(triage.items.find((i) => i.rule?.indicator === 'ac1')!.latest).toEqual({ tau: 0.6, direction: 'rising', surrogateP: 0.01, kendallP: 0.001 });
  });

  it("filters by site: the site's own alerts and those of its series, not another site's", async () => {
    const here = await createSite({ slug: 'filter-here', name: 'Here' }, lead);
    const there = await createSite({ slug: 'filter-there', name: 'There' }, lead);
    const opened: Record<string, number> = {};
    for (const [slug, site] of [
      ['here-series', here],
      ['there-series', there],
    ] as const) {
      const series = await makeSeries(slug);
      await series.update({ siteId: site.id });
      await makeRule(series, lead);
      opened[slug] = (await evaluateSnapshots([await makeSnapshot(series, { tau: 0.6, surrogateP: 0.01 })])).opened[0];
    }
    // an alert on the site itself, as a site rule opens it (the rule and its site snapshot are not needed to list it)
    const onSite = await writeTransaction((transaction) =>
      createAlert(
        {
          fields: {
            seriesId: null,
            siteId: here.id,
            ruleId: null,
            kind: 'site-slowing-down',
            severity: 'watch',
            firstSnapshotId: 1,
            latestSnapshotId: 1,
            peakTau: 0.5,
          },
          detail: 'site alert for the filter',
          audit: {},
        },
        transaction,
      ),
    );
    const ids = async (site: string) =>
      (await fetchAlertQueue(alertQueueSchema.parse({ queue: 'triage', site, sort: 'oldest' }), other)).items.map((i) => i.id);
    expect(await ids('filter-here')).toEqual([opened['here-series'], onSite.id]);
    expect(await ids('filter-there')).toEqual([opened['there-series']]);
    expect(await ids('no-such-site')).toEqual([]);
  });
});
