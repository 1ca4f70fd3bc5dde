import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Browser, type Page } from 'playwright-core';
import { startApp, type RunningApp } from '../support/app';
import { launchChromium, SHOTS, signInPage } from '../support/browser';

let app: RunningApp;
let browser: Browser;
let page: Page;

// The live demo as a newcomer sees it: a fresh start with the demo, its feed every 10 s (instead of every 2 minutes)
// and the intake every 5 s, so the first delivery shows within seconds rather than minutes.
describe('the live demo in Chromium', () => {
  beforeAll(async () => {
    app = await startApp({ demo: true, env: { DEMO_FEED_CRON: '*/10 * * * * *', INGEST_CRON: '*/5 * * * * *' } });
    browser = await launchChromium();
    page = await (await browser.newContext({ viewport: { width: 1280, height: 900 } })).newPage();
    await signInPage(page, app.baseUrl, 'viewer');
  }, 180_000);

  afterAll(async () => {
    await browser?.close();
    await app?.stop();
  });

  it('shows every demo series on time right after the start', async () => {
    await page.getByTestId('overview-table').waitFor();
    const freshness = await page.locator('[data-freshness]').evaluateAll((badges) => badges.map((b) => b.getAttribute('data-freshness')));
    expect(freshness.length).toBeGreaterThanOrEqual(8);
    expect(freshness.every((f) => f === 'fresh')).toBe(true);
  });

  it("shows the feed's first ingest run on the Intake screen, with its report", async () => {
    await page.goto(`${app.baseUrl}/intake`);
    const table = page.getByTestId('runs-table');
    // The runs table refreshes itself every 10 s; the first delivery is due within one feed cycle and one intake pass.
    const fed = table.locator('tbody tr', { hasText: 'demo-feed-' }).first();
    await fed.waitFor({ timeout: 120_000 });
    await expect(fed.textContent()).resolves.toMatch(/drop/);
    await fed.getByRole('button', { name: /Report/ }).click();
    const report = page.getByTestId('run-report');
    await report.waitFor();
    // The report of a complete logger file: its points stored, read with the header the feed writes.
    await expect.poll(() => report.textContent(), { timeout: 20_000 }).toMatch(/header: time, value/);
    await expect(report.textContent()).resolves.toMatch(/Stored \d+ new point/);
    await page.screenshot({ path: path.join(SHOTS, 'live-demo-intake.png'), fullPage: true });
  }, 150_000);
});
