import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SMTPServer } from 'smtp-server';
import { useTempDataDir } from '../support/temp-db';
import { freePort } from '../support/app';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { MailMessage, User, db } from '@/models';
import { enqueueMail, retryMail } from '@/lib/mail/outbox';
import { CLAIM_TTL_MS, deliverDueMail, messageIdFor, retryDelayMs } from '@/lib/mail/sender';
import { decodeEncodedWords, startMailSink } from '@/lib/mail/sink';
import { escapeHtml, newAlertMail, type AlertEvidence } from '@/lib/mail/templates';
import { readMailbox } from './support';

let port: number;
let sink: SMTPServer | null = null;
const mailbox = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-mailbox-'));
const closeSink = () => new Promise<void>((resolve) => (sink ? sink.close(() => resolve()) : resolve()));

beforeAll(async () => {
  await db();
  await migrateUp();
  port = await freePort();
  process.env.SMTP_URL = `smtp://127.0.0.1:${port}`;
  process.env.MAIL_RETRY_BASE_MS = '1000';
  process.env.MAIL_RETRY_MAX_MS = '4000';
  process.env.MAIL_MAX_ATTEMPTS = '3';
  sink = await startMailSink(port, mailbox);
});

afterAll(closeSink);

let n = 0;
const mail = (overrides: Partial<Parameters<typeof enqueueMail>[0]> = {}) => ({
  kind: 'test',
  dedupeKey: `test:${++n}`,
  to: 'analyst@example.test',
  subject: `Test message ${n}`,
  text: `Plain text number ${n}, with a long line that will be wrapped by quoted-printable encoding so the decoder is exercised too — and a non-ASCII dash.`,
  html: `<p>Number ${n}</p>`,
  ...overrides,
});

describe('retry policy', () => {
  it('doubles from the base and stops at the cap', () => {
    const policy = { baseMs: 30_000, maxMs: 600_000, maxAttempts: 60 };
    expect([1, 2, 3, 4, 5, 6, 10].map((a) => retryDelayMs(a, policy))).toEqual([30_000, 60_000, 120_000, 240_000, 480_000, 600_000, 600_000]);
    // The default budget outlasts an hour-long outage many times over.
    let waited = 0;
    for (let a = 1; a < policy.maxAttempts; a++) waited += retryDelayMs(a, policy);
    expect(waited).toBeGreaterThan(6 * 3_600_000);
  });
});

describe('the outbox', () => {
  it('enqueues idempotently by dedupe key', async () => {
    const m = mail();
    expect(await enqueueMail(m)).toBe(true);
    expect(await enqueueMail({ ...m, subject: 'changed' })).toBe(false);
    expect(await MailMessage.count({ where: { dedupeKey: m.dedupeKey } })).toBe(1);
  });

  it('delivers over SMTP once, with a stable Message-ID', async () => {
    await MailMessage.destroy({ where: {} });
    const m = mail();
    await enqueueMail(m);
    const report = await deliverDueMail();
    expect(report).toEqual({ claimed: 1, sent: 1, failed: 0 });
    expect(await deliverDueMail()).toEqual({ claimed: 0, sent: 0, failed: 0 });
    const received = readMailbox(mailbox).filter((r) => r.subject === m.subject);
    expect(received).toHaveLength(1);
    expect(received[0].to).toEqual(['analyst@example.test']);
    expect(received[0].messageId).toBe(messageIdFor(m.dedupeKey));
    expect(received[0].text).toBe(m.text);
    const row = (await MailMessage.findOne({ where: { dedupeKey: m.dedupeKey } }))!;
    expect(row).toMatchObject({ status: 'sent', attempts: 1, lastError: null, claimedBy: null });
  });

  it('lets two senders running at once deliver each message exactly once', async () => {
    const keys = Array.from({ length: 6 }, () => mail());
    for (const m of keys) await enqueueMail(m);
    const reports = await Promise.all([deliverDueMail(), deliverDueMail()]);
    expect(reports[0].sent + reports[1].sent).toBe(6);
    const subjects = readMailbox(mailbox).map((r) => r.subject);
    for (const m of keys) expect(subjects.filter((s) => s === m.subject)).toHaveLength(1);
  });

  it('keeps a message through an outage, retries with backoff, and delivers it once the server is back', async () => {
    await closeSink();
    sink = null;
    const m = mail();
    await enqueueMail(m);
    const t0 = Date.now();
    expect(await deliverDueMail(t0)).toMatchObject({ claimed: 1, failed: 1 });
    let row = (await MailMessage.findOne({ where: { dedupeKey: m.dedupeKey } }))!;
    expect(row.status).toBe('pending');
    expect(row.attempts).toBe(1);
    expect(row.lastError).toMatch(/ECONNREFUSED|connect/i);
    expect(row.nextAttemptAt.getTime()).toBeGreaterThanOrEqual(t0 + 1000 - 50);
    // Not due yet: nothing is claimed before the backoff has passed.
    expect((await deliverDueMail(t0 + 500)).claimed).toBe(0);

    sink = await startMailSink(port, mailbox);
    expect(await deliverDueMail(row.nextAttemptAt.getTime() + 1)).toMatchObject({ claimed: 1, sent: 1 });
    row = (await row.reload())!;
    expect(row).toMatchObject({ status: 'sent', attempts: 2 });
    expect(readMailbox(mailbox).filter((r) => r.subject === m.subject)).toHaveLength(1);
  });

  it('marks a message failed after the attempt budget, and an admin retry puts it back', async () => {
    await closeSink();
    sink = null;
    const m = mail();
    await enqueueMail(m);
    let at = Date.now();
    for (let attempt = 1; attempt <= 3; attempt++) {
      await deliverDueMail(at);
      const row = (await MailMessage.findOne({ where: { dedupeKey: m.dedupeKey } }))!;
      at = row.nextAttemptAt.getTime() + 1;
    }
    const failed = (await MailMessage.findOne({ where: { dedupeKey: m.dedupeKey } }))!;
    expect(failed).toMatchObject({ status: 'failed', attempts: 3 });
    expect((await deliverDueMail(at + 10 * 60_000)).claimed).toBe(0);

    sink = await startMailSink(port, mailbox);
    const admin = await User.create({ email: 'admin@example.test', name: 'Admin', role: 'admin', passwordHash: null, active: true });
    await retryMail(failed.id, admin);
    await failed.reload();
    expect(failed).toMatchObject({ status: 'pending', attempts: 0 });
    expect(await deliverDueMail()).toMatchObject({ sent: 1 });
    await expect(retryMail(failed.id, admin)).rejects.toThrow(/already been delivered/);
  });

  it('takes over a claim whose sender died mid-send, after the claim expires', async () => {
    const m = mail();
    await enqueueMail(m);
    const row = (await MailMessage.findOne({ where: { dedupeKey: m.dedupeKey } }))!;
    // A sender claimed it and vanished.
    await row.update({ status: 'sending', claimedBy: 'dead-process', nextAttemptAt: new Date(Date.now() + CLAIM_TTL_MS) });
    expect((await deliverDueMail()).claimed).toBe(0);
    expect(await deliverDueMail(Date.now() + CLAIM_TTL_MS + 1000)).toMatchObject({ claimed: 1, sent: 1 });
    expect(readMailbox(mailbox).filter((r) => r.subject === m.subject)).toHaveLength(1);
  });
});

describe('templates', () => {
  const evidence: AlertEvidence = {
    alertId: 7,
    kind: 'slowing-down',
    severity: 'warning',
    series: { name: 'Basin <b>north</b> & "east"', slug: 'basin-north', site: 'Pier 4', timeZone: 'UTC' },
    indicator: 'ac1',
    direction: 'rising',
    tau: 0.6234,
    kendallP: 0.00002,
    kendallDirection: 'rising',
    surrogateP: 0.0123,
    surrogateCount: 500,
    surrogateMethod: 'ar1',
    latestValue: 0.91,
    windowFraction: 0.5,
    windowPoints: 180,
    detrend: 'gaussian',
    bandwidth: 0.1,
    bandwidthPoints: 36,
    dataFrom: Date.UTC(2024, 0, 1),
    dataTo: Date.UTC(2024, 11, 31),
    n: 366,
    rule: { minTau: 0.3, direction: 'rising', maxSurrogateP: 0.05, fdrLevel: null, levelThreshold: null, levelDirection: 'above', persistence: 1 },
    calibration: null,
    shift: null,
  };

  it('states the evidence, the method and the caution, and escapes user text in HTML', () => {
    const rendered = newAlertMail(evidence);
    expect(rendered.subject).toBe('[Brinkwatch] Warning: lag-1 autocorrelation trend on Basin <b>north</b> & "east" (alert #7)');
    for (const fact of [
      '0.62',
      '< 0.001',
      '0.0123 (rising) from 500 ar1 surrogates',
      '50% of the analysed stretch (180 points)',
      'Gaussian kernel smoothing, bandwidth 10% of the analysed stretch',
      '2024-01-01 00:00 UTC to 2024-12-31 00:00 UTC (366 points analysed)',
      '/alerts/7',
      'not forecasts',
    ])
      expect(rendered.text).toContain(fact);
    expect(rendered.html).toContain('Basin &lt;b&gt;north&lt;/b&gt; &amp; &quot;east&quot;');
    expect(rendered.html).not.toContain('<b>north</b>');
    expect(rendered.html).not.toMatch(/<img|<script|src=/i);
  });

  it('keeps subjects on one header line', () => {
    expect(newAlertMail({ ...evidence, series: { ...evidence.series, name: 'Evil\r\nBcc: x@y.z' } }).subject).not.toMatch(/[\r\n]/);
  });

  it('decodes RFC 2047 subjects (worked example of RFC 2047, Sec. 8)', () => {
    expect(decodeEncodedWords('=?ISO-8859-1?Q?Andr=E9?= Pirard')).toBe('André Pirard');
    expect(decodeEncodedWords('=?UTF-8?B?w6Vsw6Vs?=')).toBe('ålål');
    expect(decodeEncodedWords('(=?ISO-8859-1?Q?a?= =?ISO-8859-1?Q?b?=)')).toBe('(ab)');
    expect(escapeHtml(`<'&">`)).toBe('&lt;&#39;&amp;&quot;&gt;');
  });
});
