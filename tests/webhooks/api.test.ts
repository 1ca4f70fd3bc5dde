import crypto from 'node:crypto';
import http from 'node:http';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD, freePort, startApp, type RunningApp } from '../support/app';
import { Session, signedIn } from '../support/session';

// Webhooks on the started product (web server and scheduler): an admin registers a loopback receiver, a viewer
// may not, and a rejected push reaches the receiver through the scheduler's delivery job, signed.
let app: RunningApp;
let admin: Session;
let viewer: Session;
let lead: Session;
const received: { headers: http.IncomingHttpHeaders; raw: string }[] = [];
let receiver: http.Server;
let receiverUrl: string;

describe('webhooks API (real server)', () => {
  beforeAll(async () => {
    const port = await freePort();
    receiver = http.createServer((request, response) => {
      const chunks: Buffer[] = [];
      request.on('data', (c: Buffer) => chunks.push(c));
      request.on('end', () => {
        received.push({ headers: request.headers, raw: Buffer.concat(chunks).toString('utf8') });
        response.writeHead(200).end();
      });
    });
    await new Promise<void>((resolve) => receiver.listen(port, '127.0.0.1', resolve));
    receiverUrl = `http://127.0.0.1:${port}/brinkwatch`;
    app = await startApp({ scheduler: true, env: { WEBHOOK_CRON: '* * * * * *' } });
    admin = await signedIn(app.baseUrl, 'admin@brinkwatch.test', DEMO_PASSWORD);
    viewer = await signedIn(app.baseUrl, 'viewer@brinkwatch.test', DEMO_PASSWORD);
    lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
  }, 600_000);
  afterAll(async () => {
    await app?.stop();
    receiver?.closeAllConnections();
    await new Promise((resolve) => receiver?.close(resolve));
  });

  it('an admin registers an endpoint (201, secret once); a viewer is refused (403); a bad address is a 422', async () => {
    expect((await viewer.json('/api/webhooks', 'POST', { url: receiverUrl, events: ['alert.opened'] })).status).toBe(403);
    const bad = await admin.json('/api/webhooks', 'POST', { url: 'http://hooks.example.org/x', events: ['alert.opened'] });
    expect(bad.status).toBe(422);
    expect((await bad.json()).error.fields.url[0]).toMatch(/https/);

    const made = await admin.json('/api/webhooks', 'POST', { url: receiverUrl, events: ['intake.rejected', 'alert.opened'], description: 'test bridge' });
    expect(made.status).toBe(201);
    const { id, secret } = await made.json();
    expect(id).toBeGreaterThan(0);
    expect(secret).toMatch(/^bws_[A-Za-z0-9_-]{43}$/);
    const listed = await (await admin.fetch('/api/webhooks')).json();
    expect(listed.items[0]).toMatchObject({ id, url: receiverUrl, events: ['intake.rejected', 'alert.opened'], active: true });
    expect(JSON.stringify(listed)).not.toContain(secret);
    expect((await viewer.fetch('/api/webhooks')).status).toBe(403);

    // A push that stores nothing is an intake rejection; the scheduler delivers it within seconds.
    expect((await lead.json('/api/series', 'POST', { slug: 'webhook-probe', name: 'Webhook probe', intervalMs: 60_000 })).status).toBe(201);
    const push = await lead.fetch('/api/series/webhook-probe/observations', {
      method: 'POST',
      headers: { 'content-type': 'text/csv' },
      body: 'time,value\nnot-a-time,1\n',
    });
    expect(push.status).toBe(422);
    const deadline = Date.now() + 30_000;
    while (!received.length && Date.now() < deadline) await new Promise((r) => setTimeout(r, 250));
    expect(received).toHaveLength(1);
    const [delivery] = received;
    const body = JSON.parse(delivery.raw);
    expect(body).toMatchObject({ event: 'intake.rejected', series: { slug: 'webhook-probe' }, run: { status: 'rejected' } });
    // Reference check with node:crypto: HMAC-SHA256(secret, timestamp + "." + raw body).
    const expected = `sha256=${crypto.createHmac('sha256', secret).update(`${delivery.headers['x-brinkwatch-timestamp']}.${delivery.raw}`).digest('hex')}`;
    expect(delivery.headers['x-brinkwatch-signature']).toBe(expected);
    expect(delivery.headers['idempotency-key']).toBe(body.id);

    // The sender records the attempt once the receiver has answered, so the log may lag the receipt by a moment.
    let deliveries = await (await admin.fetch(`/api/webhooks/${id}/deliveries`)).json();
    while (deliveries.items[0]?.status === 'sending' && Date.now() < deadline) {
      await new Promise((r) => setTimeout(r, 250));
      deliveries = await (await admin.fetch(`/api/webhooks/${id}/deliveries`)).json();
    }
    expect(deliveries.items[0]).toMatchObject({ event: 'intake.rejected', status: 'delivered', attempts: 1, attemptLog: [{ statusCode: 200, error: null }] });
    expect((await viewer.fetch(`/api/webhooks/${id}/deliveries`)).status).toBe(403);

    const paused = await admin.json(`/api/webhooks/${id}`, 'PATCH', { active: false });
    expect(paused.status).toBe(200);
    expect((await paused.json()).active).toBe(false);
    expect((await admin.fetch(`/api/webhooks/${id}`, { method: 'DELETE' })).status).toBe(204);
    expect((await admin.fetch(`/api/webhooks/${id}/deliveries`)).status).toBe(404);
  });

  it('the admin screen lists the endpoints', async () => {
    const page = await admin.fetch('/admin/webhooks');
    expect(page.status).toBe(200);
    expect(await page.text()).toContain('Register an endpoint');
    expect(await (await viewer.fetch('/admin/webhooks')).text()).not.toContain('Register an endpoint');
  });
});
