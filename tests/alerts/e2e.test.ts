import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SMTPServer } from 'smtp-server';
import { DEMO_PASSWORD, freePort, startApp, type RunningApp } from '../support/app';
import { Session, signedIn } from '../support/session';
import { readMailbox, waitFor } from '../mail/support';
import { foldRecord } from './fold';

// The test process reads and writes the app's own database (WAL mode allows it), so it must point at the app's
// DATA_DIR before anything opens a connection.
const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-alerts-e2e-'));
useDataDir(dataDir);

import { startMailSink } from '@/lib/mail/sink';
import { formatTau } from '@/lib/display/format';
import { AnalysisSnapshot, MailMessage, RuleEvaluation, Series, closeDatabase, db } from '@/models';
import { useDataDir } from '../support/temp-db';

const mailbox = path.join(dataDir, 'mailbox');
let smtpPort: number;
let sink: SMTPServer | null = null;
let app: RunningApp;
let lead: Session, analyst: Session, viewer: Session, admin: Session;
const SLUG = 'fold-basin-e2e';
// A record whose slowing down is clear at every cycle (surrogate p of ac1 ≤ 0.015 from 440 points on, measured while
// writing), so each analysis below is expected to pass; the power of the procedure is checked by simulation elsewhere
// (tests/engine/false-alarms*.test.ts), not by this one record.
const record = foldRecord(520, 7);

const closeSink = () => new Promise<void>((resolve) => (sink ? sink.close(() => resolve()) : resolve()));

/** Pushes observations through the push API as the lead, as an instrument gateway would. */
async function ingest(rows: { t: number; value: number }[]): Promise<void> {
  const response = await lead.json(
    `/api/series/${SLUG}/observations`,
    'POST',
    rows.map((r) => ({ time: new Date(r.t).toISOString(), value: r.value })),
  );
  expect(response.status).toBe(200);
  expect((await response.json()).accepted).toBe(rows.length);
}

async function evaluationsOf(ruleId: number): Promise<RuleEvaluation[]> {
  await db();
  return RuleEvaluation.findAll({ where: { ruleId }, order: [['snapshotId', 'ASC']] });
}

const mailsTo = (address: string, subject: RegExp) => readMailbox(mailbox).filter((m) => m.to.includes(address) && subject.test(m.subject));

beforeAll(async () => {
  smtpPort = await freePort();
  sink = await startMailSink(smtpPort, mailbox);
  app = await startApp({
    dataDir,
    env: {
      SMTP_URL: `smtp://127.0.0.1:${smtpPort}`,
      ANALYSIS_CRON: '*/2 * * * * *',
      MAIL_CRON: '*/1 * * * * *',
      // The digest every 2 s instead of daily, so the digest path runs end to end; its per-day key still allows one.
      DIGEST_CRON: '*/2 * * * * *',
      MAIL_RETRY_BASE_MS: '1000',
      MAIL_RETRY_MAX_MS: '2000',
    },
  });
  [lead, analyst, viewer, admin] = await Promise.all(
    ['lead', 'analyst', 'viewer', 'admin'].map((role) => signedIn(app.baseUrl, `${role}@brinkwatch.test`, DEMO_PASSWORD)),
  );
});

afterAll(async () => {
  await app?.stop();
  await closeSink();
  await closeDatabase();
});

describe('alerts end to end', () => {
  let alertId: number;
  let ruleId: number;

  it('a series approaching a fold raises one alert, however many analyses follow, and mails the watcher', async () => {
    const created = await lead.json('/api/series', 'POST', {
      slug: SLUG,
      name: 'Fold basin <test>',
      site: 'Station 9',
      intervalMs: 86_400_000,
      // The record is historical (2022–2023): the freshness pass would rightly call it late and open a data-late
      // alert; this test is about the slowing-down alert, so the series may be silent for ten years.
      lateAfterMs: 3650 * 86_400_000,
      settings: { surrogates: 200, seed: 5 },
    });
    expect(created.status).toBe(201);
    const rule = await lead.json(`/api/series/${SLUG}/rules`, 'POST', {
      indicator: 'ac1',
      minTau: 0.3,
      maxSurrogateP: 0.05,
      persistence: 1,
      severity: 'warning',
    });
    expect(rule.status).toBe(201);
    ruleId = (await rule.json()).id;
    expect((await viewer.json(`/api/series/${SLUG}/rules`, 'POST', { indicator: 'variance', minTau: 0.3 })).status).toBe(403);
    expect((await analyst.json(`/api/series/${SLUG}/watch`, 'PUT', { mode: 'immediate' })).status).toBe(200);
    expect((await viewer.json(`/api/series/${SLUG}/watch`, 'PUT', { mode: 'digest' })).status).toBe(200);
    expect((await (await analyst.fetch('/api/watches')).json()).items).toEqual([expect.objectContaining({ slug: SLUG, mode: 'immediate' })]);

    await ingest(record.slice(0, 440));
    const queue = await waitFor(
      'the alert',
      async () => {
        const body = await (await analyst.fetch(`/api/alerts?queue=triage&series=${SLUG}`)).json();
        return body.total > 0 ? body : null;
      },
      90_000,
    );
    expect(queue.items).toHaveLength(1);
    alertId = queue.items[0].id;
    expect(queue.items[0]).toMatchObject({ state: 'new', severity: 'warning', rule: { indicator: 'ac1' } });

    // Three more deliveries of data, three more analysis cycles: evidence accumulates on the same alert.
    for (let k = 0; k < 3; k++) {
      const before = (await evaluationsOf(ruleId)).length;
      await ingest(record.slice(440 + 20 * k, 460 + 20 * k));
      await waitFor('another evaluation', async () => (await evaluationsOf(ruleId)).length > before, 60_000);
    }
    const evaluations = await evaluationsOf(ruleId);
    expect(evaluations.length).toBeGreaterThanOrEqual(4);
    expect(evaluations.map((e) => e.outcome)).toEqual(['opened', ...evaluations.slice(1).map(() => 'evidence-added')]);
    const all = await (await analyst.fetch(`/api/alerts?queue=all&series=${SLUG}`)).json();
    expect(all.total).toBe(1);

    const detail = await (await analyst.fetch(`/api/alerts/${alertId}`)).json();
    expect(detail.evaluationCount).toBe(evaluations.length);
    expect(detail.evidence.latest.curves.time.length).toBeGreaterThan(100);
    expect(detail.evidence.latest.curves.surrogateTaus.ac1).toHaveLength(200);

    const mail = await waitFor('the new-alert mail', () => mailsTo('analyst@brinkwatch.test', new RegExp(`alert #${alertId}\\)`))[0], 30_000);
    const first = detail.evidence.first;
    const span = `${new Date(first.dataFrom).toISOString().slice(0, 16).replace('T', ' ')} UTC to ${new Date(first.dataTo).toISOString().slice(0, 16).replace('T', ' ')} UTC`;
    expect(mail.subject).toBe(`[Brinkwatch] Warning: lag-1 autocorrelation trend on Fold basin <test> (alert #${alertId})`);
    for (const fact of [
      'Fold basin <test> (fold-basin-e2e), Station 9',
      `from 200 ar1 surrogates`,
      `50% of the analysed stretch (${first.summary.windowPoints} points)`,
      'local-linear Gaussian kernel smoothing, bandwidth 10% of the analysed stretch',
      span,
      `${app.baseUrl.replace('127.0.0.1', 'localhost')}/alerts/${alertId}`,
      'not forecasts',
    ])
      expect(mail.text).toContain(fact);
    expect(mail.text).toMatch(new RegExp(`Kendall tau\\s+${formatTau(first.summary.kendall.ac1.tau)} \\(rising\\)\\r?\\n`));
    expect(mail.text).toMatch(/False alarms\s+(not yet calibrated|not available|\S+ false alarms per year)/);
    expect(mail.raw).not.toContain('<test>)</h1>');
    // The evidence can be handed to a reviewer: the analysed data with its settings, for viewers and up only.
    const download = await viewer.fetch(`/api/snapshots/${first.id}/data.csv`);
    expect(download.status).toBe(200);
    expect(download.headers.get('content-type')).toMatch(/^text\/csv/);
    expect(download.headers.get('x-brinkwatch-data-matches')).toBe('true');
    expect(await download.text()).toMatch(/^# settings: \{.*"surrogates":200/m);
    expect((await new Session(app.baseUrl).fetch(`/api/snapshots/${first.id}/data.csv`)).status).toBe(401);
    expect((await viewer.fetch('/api/snapshots/999999/data.csv')).status).toBe(404);
    // Several cycles, one message.
    await new Promise((r) => setTimeout(r, 2500));
    expect(mailsTo('analyst@brinkwatch.test', /alert #/)).toHaveLength(1);
    expect(mailsTo('viewer@brinkwatch.test', /alert #/)).toHaveLength(0);

    // The viewer follows by digest: the alert reaches them in the digest instead, once, not in the analyst's daily one.
    const digest = await waitFor("the viewer's digest", () => mailsTo('viewer@brinkwatch.test', /Daily digest/)[0], 30_000);
    expect(digest.subject).toBe('[Brinkwatch] Daily digest: 1 alert on series you watch');
    expect(digest.text).toContain(`#${alertId} Fold basin <test>`);
    expect(digest.text).toContain('not forecasts');
    await new Promise((r) => setTimeout(r, 4500));
    expect(mailsTo('viewer@brinkwatch.test', /Daily digest/)).toHaveLength(1);
    expect(mailsTo('analyst@brinkwatch.test', /Daily digest/)).toHaveLength(0);
  });

  it('is worked by role: viewer refused, analyst acknowledges and escalates, the lead confirms and watchers hear of it', async () => {
    const act = (who: Session, body: object) => who.json(`/api/alerts/${alertId}/actions`, 'POST', body);
    const refused = await act(viewer, { action: 'acknowledge' });
    expect(refused.status).toBe(403);
    expect((await refused.json()).error.code).toBe('forbidden');
    expect((await new Session(app.baseUrl).json(`/api/alerts/${alertId}/actions`, 'POST', { action: 'acknowledge' })).status).toBe(401);

    const ack = await act(analyst, { action: 'acknowledge', version: 1 });
    expect(ack.status).toBe(200);
    expect(await ack.json()).toMatchObject({ state: 'acknowledged', version: 2 });
    expect((await analyst.json(`/api/alerts/${alertId}/notes`, 'POST', { body: 'Both loggers agree; not an instrument issue.' })).status).toBe(201);
    expect((await viewer.json(`/api/alerts/${alertId}/notes`, 'POST', { body: 'viewer note' })).status).toBe(403);
    const mine = await (await analyst.fetch('/api/alerts?queue=mine')).json();
    expect(mine.items.map((i: { id: number }) => i.id)).toContain(alertId);

    expect((await act(analyst, { action: 'escalate', note: 'Please review before the board meeting.' })).status).toBe(200);
    expect((await act(analyst, { action: 'confirm' })).status).toBe(403);
    const escalation = await waitFor('the escalation mail', () => mailsTo('lead@brinkwatch.test', /Escalated to leads/)[0], 30_000);
    expect(escalation.text).toContain('Please review before the board meeting.');

    const confirmed = await act(lead, { action: 'confirm', note: 'Signed off as a real early warning.' });
    expect(confirmed.status).toBe(200);
    for (const watcher of ['analyst@brinkwatch.test', 'viewer@brinkwatch.test']) {
      const signOff = await waitFor(`the sign-off to ${watcher}`, () => mailsTo(watcher, /Confirmed early warning/)[0], 30_000);
      expect(signOff.text).toContain('Signed off as a real early warning.');
    }
    expect(mailsTo('lead@brinkwatch.test', /Confirmed early warning/)).toHaveLength(0);

    const detail = await (await viewer.fetch(`/api/alerts/${alertId}`)).json();
    expect(detail.timeline.map((e: { action: string }) => e.action)).toEqual(['open', 'acknowledge', 'escalate', 'confirm']);
    expect(detail.notes).toHaveLength(1);
    expect(detail.allowedActions).toEqual([]);
    const closed = await (await lead.fetch('/api/alerts?queue=closed')).json();
    expect(closed.counts.closed).toBeGreaterThanOrEqual(1);
  });

  it('lets one of two concurrent triage actions win and answers the other with 409', async () => {
    // the reopening goes through the former address, kept for one release (RFC 9745 Deprecation header)
    const reopened = await lead.json(`/api/alerts/${alertId}/transitions`, 'POST', { action: 'reopen' });
    expect(reopened.status).toBe(200);
    expect(reopened.headers.get('link')).toBe(`</api/alerts/${alertId}/actions>; rel="successor-version"`);
    const [a, b] = await Promise.all([
      analyst.json(`/api/alerts/${alertId}/actions`, 'POST', { action: 'escalate' }),
      lead.json(`/api/alerts/${alertId}/actions`, 'POST', { action: 'escalate' }),
    ]);
    expect([a.status, b.status].sort()).toEqual([200, 409]);
  });

  it('holds the quiet period after a dismissal while the evidence is no stronger', async () => {
    expect((await lead.json(`/api/rules/${ruleId}`, 'PATCH', { quietPeriodHours: 72 })).status).toBe(200);
    const dismissed = await lead.json(`/api/alerts/${alertId}/actions`, 'POST', {
      action: 'dismiss',
      reason: 'seasonal-or-external-forcing',
      note: 'Dam release upstream.',
    });
    expect(dismissed.status).toBe(200);
    for (let k = 0; k < 2; k++) {
      const before = (await evaluationsOf(ruleId)).length;
      await ingest(record.slice(500 + 10 * k, 510 + 10 * k));
      await waitFor('another evaluation', async () => (await evaluationsOf(ruleId)).length > before, 60_000);
    }
    const latest = (await evaluationsOf(ruleId)).slice(-2);
    expect(latest.map((e) => e.outcome)).toEqual(['quiet-period', 'quiet-period']);
    expect((await (await analyst.fetch(`/api/alerts?queue=all&series=${SLUG}`)).json()).total).toBe(1);
    await db();
    expect(await AnalysisSnapshot.count({ where: { seriesId: (await Series.findOne({ where: { slug: SLUG } }))!.id, status: 'ok' } })).toBeGreaterThanOrEqual(
      6,
    );
  });
});

describe('mail through an outage', () => {
  it('keeps an invitation through a stopped SMTP server, retries, and delivers it exactly once when it is back', async () => {
    await closeSink();
    sink = null;
    const invited = await admin.json('/api/users', 'POST', { email: 'new.analyst@example.test', name: 'New Analyst', role: 'analyst' });
    expect(invited.status).toBe(201);
    expect(await invited.json()).toMatchObject({ active: false, invited: true, role: 'analyst' });
    expect((await lead.json('/api/users', 'POST', { email: 'x@example.test', name: 'X', role: 'admin' })).status).toBe(403);

    const failing = await waitFor(
      'two failed attempts',
      async () => {
        const outbox = await (await admin.fetch('/api/admin/outbox')).json();
        const row = outbox.items.find((m: { kind: string }) => m.kind === 'invitation');
        return row && row.attempts >= 2 && row.status === 'pending' ? row : null;
      },
      60_000,
    );
    expect(failing.lastError).toMatch(/ECONNREFUSED|connect/i);

    sink = await startMailSink(smtpPort, mailbox);
    const invitation = await waitFor('the invitation', () => mailsTo('new.analyst@example.test', /invited/)[0], 60_000);
    await new Promise((r) => setTimeout(r, 3000));
    expect(mailsTo('new.analyst@example.test', /invited/)).toHaveLength(1);
    await db();
    expect(await MailMessage.findOne({ where: { kind: 'invitation' } })).toMatchObject({ status: 'sent' });

    const token = /\/invite\/([A-Za-z0-9_-]+)/.exec(invitation.text)![1];
    expect((await new Session(app.baseUrl).json(`/api/invitations/${token}/accept`, 'POST', { password: 'short' })).status).toBe(422);
    expect((await new Session(app.baseUrl).json(`/api/invitations/${token}/accept`, 'POST', { password: 'a long enough passphrase' })).status).toBe(200);
    expect((await new Session(app.baseUrl).json(`/api/invitations/${token}/accept`, 'POST', { password: 'a second passphrase' })).status).toBe(422);
    const newcomer = await signedIn(app.baseUrl, 'new.analyst@example.test', 'a long enough passphrase');
    expect((await newcomer.fetch('/api/alerts')).status).toBe(200);

    // Deactivation ends access on the next request.
    const users = (await (await admin.fetch('/api/users')).json()).items as { id: number; email: string }[];
    const id = users.find((u) => u.email === 'new.analyst@example.test')!.id;
    expect((await admin.json(`/api/users/${id}`, 'PATCH', { active: false })).status).toBe(200);
    expect((await newcomer.fetch('/api/alerts')).status).toBe(401);

    const mailboxList = await (await admin.fetch('/api/admin/mailbox')).json();
    expect(mailboxList.items.some((m: { subject: string }) => m.subject === invitation.subject)).toBe(true);
    expect((await analyst.fetch('/api/admin/mailbox')).status).toBe(403);
  });

  it('answers a reset request with 202 either way and mails only existing accounts', async () => {
    const anonymous = new Session(app.baseUrl);
    const unknown = await anonymous.json('/api/auth/reset-request', 'POST', { email: 'nobody@example.test' });
    const known = await anonymous.json('/api/auth/reset-request', 'POST', { email: 'viewer@brinkwatch.test' });
    expect([unknown.status, known.status]).toEqual([202, 202]);
    expect(await unknown.json()).toEqual(await known.json());
    const reset = await waitFor('the reset mail', () => mailsTo('viewer@brinkwatch.test', /Reset your password/)[0], 30_000);
    const token = /\/reset\/([A-Za-z0-9_-]+)/.exec(reset.text)![1];
    expect((await anonymous.json(`/api/password-resets/${token}`, 'POST', { password: 'viewer new passphrase' })).status).toBe(200);
    await signedIn(app.baseUrl, 'viewer@brinkwatch.test', 'viewer new passphrase');
    expect(mailsTo('nobody@example.test', /./)).toHaveLength(0);
  });
});
