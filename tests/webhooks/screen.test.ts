import http from 'node:http';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Browser, type Page } from 'playwright-core';
import { DEMO_PASSWORD, freePort, startApp, type RunningApp } from '../support/app';
import { signedIn } from '../support/session';
import { launchChromium, SHOTS } from '../support/browser';

let app: RunningApp;
let browser: Browser;
let page: Page;
let receiver: http.Server;
let receiverUrl: string;
let received = 0;

describe('the webhooks screen (Chromium)', () => {
  beforeAll(async () => {
    const port = await freePort();
    receiver = http.createServer((request, response) => {
      request.resume();
      request.on('end', () => {
        received++;
        response.writeHead(200).end();
      });
    });
    await new Promise<void>((resolve) => receiver.listen(port, '127.0.0.1', resolve));
    receiverUrl = `http://127.0.0.1:${port}/chat-bridge`;
    app = await startApp({ scheduler: true, env: { WEBHOOK_CRON: '* * * * * *' } });
    browser = await launchChromium();
    page = await (await browser.newContext({ viewport: { width: 1280, height: 900 } })).newPage();
    await page.goto(`${app.baseUrl}/`);
    await page.waitForURL(/\/signin/);
    await page.getByLabel('E-mail').fill('admin@brinkwatch.test');
    await page.getByLabel('Password').fill(DEMO_PASSWORD);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(`${app.baseUrl}/`);
  }, 600_000);
  afterAll(async () => {
    await browser?.close();
    await app?.stop();
    receiver?.closeAllConnections();
    await new Promise((resolve) => receiver?.close(resolve));
  });

  it('registers an endpoint with chosen events, shows its secret once, and lists its deliveries with their attempts', async () => {
    await page.goto(`${app.baseUrl}/admin/webhooks`);
    await expect.poll(() => page.getByText('No endpoint is registered').isVisible()).toBe(true);
    await page.getByLabel('Address').fill('http://hooks.example.org/x');
    await page.getByRole('button', { name: 'Register' }).click();
    await expect.poll(() => page.getByText(/Plain http:\/\/ is allowed only to this machine/).isVisible()).toBe(true);

    await page.getByLabel('Address').fill(receiverUrl);
    await page.getByLabel('What receives it (optional)').fill('operations chat');
    await page.getByRole('checkbox', { name: /ingest run was rejected/ }).check();
    await page.getByRole('button', { name: 'Register' }).click();
    await expect.poll(() => page.getByTestId('webhook-secret').textContent()).toMatch(/^bws_/);
    await expect.poll(() => page.getByTestId('webhook-endpoints').textContent()).toContain(receiverUrl);

    const lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    expect((await lead.json('/api/series', 'POST', { slug: 'screen-probe', name: 'Screen probe', intervalMs: 60_000 })).status).toBe(201);
    await lead.fetch('/api/series/screen-probe/observations', { method: 'POST', headers: { 'content-type': 'text/csv' }, body: 'time,value\nnot-a-time,1\n' });
    await expect.poll(() => received, { timeout: 30_000 }).toBe(1);

    await page.getByRole('button', { name: 'Deliveries' }).click();
    await expect.poll(() => page.getByText('✓ received').isVisible()).toBe(true);
    await page.getByRole('button', { name: 'Attempts and body' }).click();
    await expect.poll(() => page.getByText(/HTTP 200, received/).isVisible()).toBe(true);
    await page.screenshot({ path: path.join(SHOTS, 'admin-webhooks.png'), fullPage: true });
  });
});
