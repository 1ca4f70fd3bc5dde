import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Browser, type BrowserContext } from 'playwright-core';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { periodContaining } from '@/lib/reports/period-shape';
import { launchChromium, SHOTS, signedInContext } from '../support/browser';

let app: RunningApp;
let browser: Browser;
let lead: BrowserContext;
let leadApi: Session;
let viewerApi: Session;

describe('period reports (Chromium)', () => {
  beforeAll(async () => {
    app = await startApp({ demo: true });
    browser = await launchChromium();
    [leadApi, viewerApi] = await Promise.all([
      signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD),
      signedIn(app.baseUrl, 'viewer@brinkwatch.test', DEMO_PASSWORD),
    ]);
    lead = await signedInContext(browser, app.baseUrl, 'lead');
  }, 600_000);

  afterAll(async () => {
    await browser?.close();
    await app?.stop();
  });

  it('renders a quarterly network report on screen and saves it as an A4 PDF without navigation', async () => {
    const page = await lead.newPage();
    await page.goto(`${app.baseUrl}/reports`);
    await page.getByRole('link', { name: 'Reports' }).waitFor();
    // The quarter holding the demo's live records, chosen through the picker.
    const quarter = periodContaining('quarter', Date.now());
    await page.getByTestId('period-kind').selectOption('quarter');
    await page.getByTestId('period-anchor').fill(quarter.to);
    await page.getByTestId('period-site').selectOption('');
    await page.getByRole('button', { name: 'Show report' }).click();
    await page.waitForURL(`${app.baseUrl}/reports?from=${quarter.from}&to=${quarter.to}`);
    const report = page.getByTestId('period-report');
    await expect.poll(() => report.getByRole('heading', { level: 1 }).textContent()).toMatch(/^\d{4}-Q[1-4] · whole network$/);
    const seriesRows = await page.getByTestId('report-series').locator('tbody tr').count();
    expect(seriesRows).toBeGreaterThan(3);
    expect(await page.getByRole('note').count()).toBe(1); // the caution, once
    // A lead schedules the quarterly report to an address without an account.
    const form = page.getByTestId('schedule-form');
    await form.getByLabel('Name').fill('Quarterly to the water authority');
    await form.getByLabel('Recipients').fill('officer@authority.example, Officer@authority.example');
    await form.getByRole('button', { name: 'Add schedule' }).click();
    const row = page.getByTestId('schedule-table').locator('tbody tr', { hasText: 'Quarterly to the water authority' });
    await expect.poll(() => row.textContent()).toContain('officer@authority.example');
    expect(await row.textContent()).not.toContain('Officer@');
    await page.screenshot({ path: path.join(SHOTS, 'period-report.png'), fullPage: true });

    await page.emulateMedia({ media: 'print' });
    expect(await page.getByRole('navigation', { name: 'Main' }).isVisible()).toBe(false);
    expect(await page.getByTestId('period-picker').isVisible()).toBe(false);
    expect(await page.getByTestId('schedule-form').isVisible()).toBe(false);
    const file = path.join(SHOTS, 'period-report.pdf');
    const pdf = await page.pdf({ path: file, format: 'A4', preferCSSPageSize: true, printBackground: true });
    expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    const pages = pdf.toString('latin1').match(/\/Type\s*\/Page[^s]/g) ?? [];
    expect(pages.length).toBeGreaterThanOrEqual(1);
    await page.close();
  });

  it('serves the report as JSON and its tables as CSV to viewers, and refuses a bad period', async () => {
    const quarter = periodContaining('quarter', Date.now());
    const json = await viewerApi.fetch(`/api/reports/period?from=${quarter.from}&to=${quarter.to}`);
    expect(json.status).toBe(200);
    const body = await json.json();
    expect(body.period).toMatchObject({ from: quarter.from, to: quarter.to });
    expect(body.caution).toMatch(/not forecasts/);
    const csv = await viewerApi.fetch(`/api/reports/period?from=${quarter.from}&to=${quarter.to}&format=csv`);
    expect(csv.headers.get('content-type')).toContain('text/csv');
    expect((await csv.text()).split('\r\n')[0]).toBe(
      'id,kind,seriesSlug,seriesName,site,severity,subject,openedAt,stateNow,decision,decidedAt,decidedBy,reason,note,hoursToDecision',
    );
    expect((await viewerApi.fetch('/api/reports/period?from=2026-02-30&to=2026-03-01')).status).toBe(422);
    expect((await viewerApi.fetch('/api/reports/schedules')).status).toBe(403);
    expect((await leadApi.fetch('/api/reports/schedules')).status).toBe(200);
  });

  it('opens the unsubscribe page without signing in', async () => {
    const context = await browser.newContext();
    const page = await context.newPage();
    await page.goto(`${app.baseUrl}/unsubscribe/not-a-real-token`);
    expect(page.url()).toContain('/unsubscribe/');
    await page.getByText('This link is not valid').waitFor();
    await context.close();
  });
});
