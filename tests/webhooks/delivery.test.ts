import crypto from 'node:crypto';
import http from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';
import { freePort } from '../support/app';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { WebhookAttempt, WebhookDelivery, db, writeTransaction, type Series } from '@/models';
import { evaluateSnapshots } from '@/lib/alerts/evaluate';
import { confirmAlert, dismissAlert, escalateAlert, acknowledgeAlert } from '@/lib/alerts/triage';
import { ingestObservations } from '@/lib/intake/pipeline';
import { ANALYSIS_CAUTION } from '@/lib/engine/analyze';
import { WEBHOOK_EVENTS } from '@/lib/webhooks/events';
import { enqueueWebhookEvent } from '@/lib/webhooks/outbox';
import { rejectedRunPayload } from '@/lib/webhooks/payloads';
import { WEBHOOK_RETRY_POLICY, deliverDueWebhooks } from '@/lib/webhooks/sender';
import { fetchDeliveries, listWebhooks, registerWebhook, retryDelivery, updateWebhook } from '@/lib/webhooks/admin';
import type { Actor } from '@/lib/auth/roles';
import { makeRule, makeSeries, makeSnapshot, makeUser } from '../alerts/helpers';

/** What a receiver saw: the headers it reads and the raw body as bytes arrived. */
interface Received {
  headers: http.IncomingHttpHeaders;
  raw: string;
}

/**
 * A receiver on loopback (node:http) that answers `status` (or never answers while `hang`), and can be stopped and
 * started again on the same port, as a team's chat bridge going down and coming back.
 */
class Receiver {
  received: Received[] = [];
  status = 204;
  hang = false;
  private server: http.Server | null = null;
  constructor(readonly port: number) {}
  get url() {
    return `http://127.0.0.1:${this.port}/hook`;
  }
  async start(): Promise<void> {
    this.server = http.createServer((request, response) => {
      const chunks: Buffer[] = [];
      request.on('data', (c: Buffer) => chunks.push(c));
      request.on('end', () => {
        if (this.hang) return;
        this.received.push({ headers: request.headers, raw: Buffer.concat(chunks).toString('utf8') });
        response.writeHead(this.status, { 'content-type': 'text/plain' }).end(this.status < 300 ? '' : 'receiver says no');
      });
    });
    await new Promise<void>((resolve) => this.server!.listen(this.port, '127.0.0.1', resolve));
  }
  async stop(): Promise<void> {
    const server = this.server;
    if (!server) return;
    this.server = null;
    server.closeAllConnections();
    await new Promise<void>((resolve) => server.close(() => resolve()));
  }
  take(): Received[] {
    const all = this.received;
    this.received = [];
    return all;
  }
}

/**
 * The reference check a receiver makes, written here with node:crypto alone (not the product's webhookSignature):
 * HMAC-SHA256 keyed by the secret over `timestamp + "." + raw body`, compared in constant time.
 */
function validSignature(secret: string, delivery: Received): boolean {
  const timestamp = String(delivery.headers['x-brinkwatch-timestamp']);
  const expected = Buffer.from(`sha256=${crypto.createHmac('sha256', secret).update(`${timestamp}.${delivery.raw}`).digest('hex')}`);
  const given = Buffer.from(String(delivery.headers['x-brinkwatch-signature'] ?? ''));
  return given.length === expected.length && crypto.timingSafeEqual(given, expected);
}

let receiver: Receiver;
let admin: Actor, lead: Actor, analyst: Actor;
let secret: string;
let endpointId: number;
let series: Series;

beforeAll(async () => {
  await db();
  await migrateUp();
  admin = await makeUser('admin', 'Ada Admin');
  lead = await makeUser('lead', 'Lena Lead');
  analyst = await makeUser('analyst', 'Anton Analyst');
  receiver = new Receiver(await freePort());
  await receiver.start();
  ({ id: endpointId, secret } = await registerWebhook(admin, { url: receiver.url, events: [...WEBHOOK_EVENTS], description: 'test receiver' }));
  series = await makeSeries('harbour-oxygen');
  await makeRule(series, lead);
});

afterAll(async () => {
  await receiver.stop();
});

/** Queues an intake rejection of run `runId` straight through the outbox; answers the payload and how many were queued. */
async function queueRejection(runId: number) {
  const payload = rejectedRunPayload({ id: runId, source: 'push', fileName: null, rowsRead: 1, rejected: 1, message: 'bad row' }, series, new Date());
  const queued = await writeTransaction((t) => enqueueWebhookEvent('intake.rejected', payload, t));
  return { payload, queued };
}

const deliveriesOf = async (status?: string) => WebhookDelivery.count({ where: { endpointId, ...(status ? { status } : {}) } });

describe('each event reaches the receiver once, signed', () => {
  it('alert opened, abrupt shift, escalated, decided (confirmed and dismissed) and a rejected intake', async () => {
    const opened = (await evaluateSnapshots([await makeSnapshot(series, { tau: 0.6, surrogateP: 0.01 })])).opened[0];
    const shift = (
      await evaluateSnapshots([
        await makeSnapshot(series, { tau: 0.6, surrogateP: 0.01 }, { summary: { shifts: [{ time: Date.UTC(2020, 8, 1), index: 244, size: -1.5 }] } }),
      ])
    ).shifts[0];
    expect(opened).toBeGreaterThan(0);
    expect(shift).toBeGreaterThan(0);
    await escalateAlert(opened, analyst, { note: 'Looks real;\nplease decide.' });
    await confirmAlert(opened, lead);
    await dismissAlert(shift, 'instrument-fault', analyst, { note: 'Probe swapped' });
    // Acknowledging is no event: it must queue nothing.
    const other = await makeSeries();
    await makeRule(other, lead);
    await acknowledgeAlert((await evaluateSnapshots([await makeSnapshot(other, { tau: 0.7, surrogateP: 0.01 })])).opened[0], analyst);
    const rejected = await ingestObservations({ series, source: 'upload', fileName: 'bad.csv', csv: 'time,value\nyesterday,abc\n' });
    expect(rejected.status).toBe('rejected');

    const report = await deliverDueWebhooks();
    expect(report).toMatchObject({ claimed: 7, delivered: 7, retrying: 0, failed: 0 });
    const got = receiver.take();
    const bodies = got.map((d) => JSON.parse(d.raw));
    expect(bodies.map((b) => b.event).sort()).toEqual([
      'alert.abrupt-shift',
      'alert.decided',
      'alert.decided',
      'alert.escalated',
      'alert.opened',
      'alert.opened',
      'intake.rejected',
    ]);
    for (const [i, d] of got.entries()) {
      expect(validSignature(secret, d), d.raw).toBe(true);
      expect(d.headers['content-type']).toBe('application/json');
      expect(d.headers['x-brinkwatch-event']).toBe(bodies[i].event);
      expect(d.headers['idempotency-key']).toBe(bodies[i].id);
      expect(Math.abs(Number(d.headers['x-brinkwatch-timestamp']) - Date.now() / 1000)).toBeLessThan(60);
      expect(bodies[i].text).not.toMatch(/\n/);
      expect(bodies[i].url).toMatch(/^http/);
      expect(new Date(bodies[i].occurredAt).toISOString()).toBe(bodies[i].occurredAt);
      if (bodies[i].event.startsWith('alert.')) expect(bodies[i].caution).toBe(ANALYSIS_CAUTION);
    }
    expect(new Set(bodies.map((b) => b.id)).size).toBe(7);
    const [listed] = await listWebhooks();
    expect(listed).toMatchObject({ id: endpointId, counts: { delivered: 7 }, active: true });
    expect(Date.now() - Date.parse(listed.lastDeliveredAt!)).toBeLessThan(60_000);
    expect(JSON.stringify(listed)).not.toContain(secret);
    const byEvent = (event: string) => bodies.filter((b) => b.event === event);
    expect(byEvent('alert.opened').find((b) => b.alert.id === opened)).toMatchObject({
      series: { slug: 'harbour-oxygen', name: 'Series harbour-oxygen' },
      alert: { kind: 'slowing-down', state: 'new', tau: 0.6 },
      url: expect.stringMatching(new RegExp(`/alerts/${opened}$`)),
    });
    expect(byEvent('alert.abrupt-shift')[0]).toMatchObject({
      alert: { id: shift, kind: 'abrupt-shift', shift: { time: '2020-09-01T00:00:00.000Z', size: -1.5 } },
    });
    expect(byEvent('alert.escalated')[0]).toMatchObject({
      alert: { id: opened, state: 'escalated', by: 'Anton Analyst', note: 'Looks real;\nplease decide.' },
    });
    expect(byEvent('alert.decided').map((b) => [b.alert.id, b.alert.decision, b.alert.reason])).toEqual(
      expect.arrayContaining([
        [opened, 'confirmed', null],
        [shift, 'dismissed', 'instrument-fault'],
      ]),
    );
    expect(byEvent('intake.rejected')[0]).toMatchObject({
      run: { id: rejected.runId, fileName: 'bad.csv', status: 'rejected' },
      series: { slug: 'harbour-oxygen' },
    });

    // Nothing goes twice: a second pass finds nothing due, and enqueueing an event again is a no-op.
    expect(await deliverDueWebhooks()).toMatchObject({ claimed: 0 });
    const again = rejectedRunPayload(
      { id: rejected.runId, source: 'upload', fileName: 'bad.csv', rowsRead: 1, rejected: 1, message: 'again' },
      series,
      new Date(byEvent('intake.rejected')[0].occurredAt),
    );
    expect(await writeTransaction((t) => enqueueWebhookEvent('intake.rejected', again, t))).toBe(0);
    expect(await deliverDueWebhooks()).toMatchObject({ claimed: 0 });
    expect(receiver.take()).toEqual([]);
  });

  it('names each event by what it is about and when it occurred: a run or alert id issued again after a restore is a new event', () => {
    const run = { id: 7, source: 'drop', fileName: 'a.csv', rowsRead: 1, rejected: 1, message: 'no time column' };
    const series = { slug: 's', name: 'S', site: '' };
    const at = new Date('2026-01-01T00:00:00Z');
    expect(rejectedRunPayload(run, series, at).id).toBe('intake.rejected:run-7@2026-01-01T00:00:00.000Z');
    // the same event enqueued twice keeps one key (the outbox's dedupe); the same run id a millisecond later does not
    expect(rejectedRunPayload(run, series, new Date(at)).id).toBe(rejectedRunPayload(run, series, at).id);
    expect(rejectedRunPayload(run, series, new Date(at.getTime() + 1)).id).not.toBe(rejectedRunPayload(run, series, at).id);
  });

  it('queues nothing when the change that caused the event is rolled back', async () => {
    const before = await deliveriesOf();
    const payload = rejectedRunPayload({ id: 999_999, source: 'push', fileName: null, rowsRead: 0, rejected: 0, message: 'never' }, series, new Date());
    await expect(
      writeTransaction(async (t) => {
        expect(await enqueueWebhookEvent('intake.rejected', payload, t)).toBe(1);
        throw new Error('the change failed');
      }),
    ).rejects.toThrow('the change failed');
    expect(await deliveriesOf()).toBe(before);
  });
});

describe('a receiver that was down gets what it missed, once', () => {
  it('fails while down, backs off, and delivers each once after it is back', async () => {
    await receiver.stop();
    const rejected = await ingestObservations({ series, source: 'push', csv: 'time,value\nnot-a-time,1\n' });
    const other = await makeSeries();
    await makeRule(other, lead);
    const opened = (await evaluateSnapshots([await makeSnapshot(other, { tau: 0.65, surrogateP: 0.01 })])).opened[0];
    expect(rejected.status).toBe('rejected');
    expect(opened).toBeGreaterThan(0);

    const t0 = Date.now();
    expect(await deliverDueWebhooks(t0)).toMatchObject({ claimed: 2, delivered: 0, retrying: 2 });
    // Within the first backoff (10 s) nothing is due.
    expect(await deliverDueWebhooks(t0 + 9_000)).toMatchObject({ claimed: 0 });
    expect(await deliverDueWebhooks(t0 + 10_000)).toMatchObject({ claimed: 2, retrying: 2 });
    // The second wait is 20 s.
    expect(await deliverDueWebhooks(t0 + 29_000)).toMatchObject({ claimed: 0 });
    const waiting = await WebhookDelivery.findAll({ where: { endpointId, status: 'pending' } });
    expect(waiting).toHaveLength(2);
    for (const d of waiting) {
      expect(d.attempts).toBe(2);
      expect(d.nextAttemptAt.getTime()).toBe(t0 + 30_000);
      expect(d.lastError).toMatch(/ECONNREFUSED/);
    }

    await receiver.start();
    expect(await deliverDueWebhooks(t0 + 30_000)).toMatchObject({ claimed: 2, delivered: 2 });
    const got = receiver.take();
    const ids = got.map((d) => JSON.parse(d.raw) as { id: string; occurredAt: string });
    expect(ids.map((b) => b.id.replace(/@.*$/, '')).sort()).toEqual([`alert.opened:alert-${opened}`, `intake.rejected:run-${rejected.runId}`].sort());
    // an id ends with the instant the event occurred, so a restore from backup that issues the same alert id again makes a new one
    expect(ids.every((b) => b.id.endsWith(`@${b.occurredAt}`))).toBe(true);
    expect(got.every((d) => validSignature(secret, d))).toBe(true);
    expect(await deliverDueWebhooks(t0 + 3_600_000)).toMatchObject({ claimed: 0 });
    expect(receiver.take()).toEqual([]);

    // The admin sees every attempt: two refused, one received.
    const page = await fetchDeliveries(endpointId, { page: 1, pageSize: 2 });
    for (const d of page.items) {
      expect(d.status).toBe('delivered');
      expect(d.attemptLog.map((a) => a.statusCode)).toEqual([null, null, 204]);
      expect(d.attemptLog[0].error).toMatch(/ECONNREFUSED/);
    }
  });

  it('a refusing receiver costs the attempt budget, then the delivery is failed until an admin retries it', async () => {
    receiver.status = 503;
    const { payload } = await queueRejection(500_001);
    let now = Date.now();
    for (let attempt = 1; attempt <= WEBHOOK_RETRY_POLICY.maxAttempts; attempt++) {
      const report = await deliverDueWebhooks(now);
      expect(report.claimed).toBe(1);
      now += WEBHOOK_RETRY_POLICY.maxMs;
    }
    const failed = (await WebhookDelivery.findOne({ where: { endpointId, idempotencyKey: payload.id } }))!;
    expect(failed).toMatchObject({ status: 'failed', attempts: WEBHOOK_RETRY_POLICY.maxAttempts, lastStatus: 503 });
    expect(failed.lastError).toBe('HTTP 503: receiver says no');
    expect(await WebhookAttempt.count({ where: { deliveryId: failed.id } })).toBe(WEBHOOK_RETRY_POLICY.maxAttempts);
    expect(await deliverDueWebhooks(now + 86_400_000)).toMatchObject({ claimed: 0 });
    receiver.take();

    receiver.status = 200;
    await retryDelivery(admin, endpointId, failed.id);
    expect(await deliverDueWebhooks()).toMatchObject({ claimed: 1, delivered: 1 });
    expect(receiver.take().map((d) => d.headers['idempotency-key'])).toEqual([payload.id]);
    await expect(retryDelivery(admin, endpointId, failed.id)).rejects.toThrow(/already/);
    await expect(retryDelivery(admin, endpointId + 1, failed.id)).rejects.toThrow(/not found|Delivery/i);
  });

  it('a receiver that never answers costs one timed-out attempt, not the job', async () => {
    receiver.hang = true;
    const { payload } = await queueRejection(500_002);
    const started = Date.now();
    expect(await deliverDueWebhooks(Date.now(), 300)).toMatchObject({ claimed: 1, retrying: 1 });
    expect(Date.now() - started).toBeLessThan(5_000);
    const delivery = (await WebhookDelivery.findOne({ where: { endpointId, idempotencyKey: payload.id } }))!;
    expect(delivery.lastError).toBe('no answer within 0.3 s');
    receiver.hang = false;
    receiver.take();
    expect(await deliverDueWebhooks(Date.now() + WEBHOOK_RETRY_POLICY.baseMs)).toMatchObject({ delivered: 1 });
    // A receiver that got the body but whose answer was lost sees the same idempotency key again: it can tell.
    expect(receiver.take().map((d) => d.headers['idempotency-key'])).toEqual([payload.id]);
  });
});

describe('claims, pauses', () => {
  it('two passes at once send each delivery once; an abandoned claim is taken over after it expires', async () => {
    for (let i = 0; i < 5; i++) {
      await queueRejection(600_000 + i);
    }
    const [a, b] = await Promise.all([deliverDueWebhooks(), deliverDueWebhooks()]);
    expect(a.delivered + b.delivered).toBe(5);
    expect(receiver.take()).toHaveLength(5);

    const { payload } = await queueRejection(600_100);
    // A sender that claimed it and died: the claim holds until its expiry.
    await WebhookDelivery.update(
      { status: 'sending', claimedBy: 'dead-process', nextAttemptAt: new Date(Date.now() + 60_000) },
      { where: { idempotencyKey: payload.id } },
    );
    expect(await deliverDueWebhooks()).toMatchObject({ claimed: 0 });
    expect(await deliverDueWebhooks(Date.now() + 61_000)).toMatchObject({ claimed: 1, delivered: 1 });
    expect(receiver.take()).toHaveLength(1);
  });

  it('a paused endpoint gets no new events, and what was queued waits until it is resumed', async () => {
    const { payload: queued } = await queueRejection(700_001);
    await updateWebhook(admin, endpointId, { active: false });
    expect((await queueRejection(700_002)).queued).toBe(0);
    expect(await deliverDueWebhooks()).toMatchObject({ claimed: 0 });
    await updateWebhook(admin, endpointId, { active: true });
    expect(await deliverDueWebhooks()).toMatchObject({ claimed: 1, delivered: 1 });
    expect(receiver.take().map((d) => d.headers['idempotency-key'])).toEqual([queued.id]);
  });

  it('an endpoint hears only the events it chose', async () => {
    const second = new Receiver(await freePort());
    await second.start();
    try {
      const { id } = await registerWebhook(admin, { url: second.url, events: ['alert.decided'], description: '' });
      expect((await queueRejection(800_001)).queued).toBe(1);
      await deliverDueWebhooks();
      expect(second.take()).toEqual([]);
      expect(await WebhookDelivery.count({ where: { endpointId: id } })).toBe(0);
      receiver.take();
    } finally {
      await second.stop();
    }
  });
});
