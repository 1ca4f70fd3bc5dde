import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Browser, type Page } from 'playwright-core';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { launchChromium, SHOTS, signInPage } from '../support/browser';

const SLUG = 'veskary-deep-temperature';

let app: RunningApp;
let browser: Browser;
let page: Page;
let analyst: Session;

describe('station data in Chromium', () => {
  beforeAll(async () => {
    app = await startApp({ demo: true, env: { ANALYSIS_CRON: '*/5 * * * * *' } });
    browser = await launchChromium();
    analyst = await signedIn(app.baseUrl, 'analyst@brinkwatch.test', DEMO_PASSWORD);
    page = await (await browser.newContext({ viewport: { width: 1280, height: 900 } })).newPage();
    await signInPage(page, app.baseUrl, 'lead');
  }, 180_000);

  afterAll(async () => {
    await browser?.close();
    await app?.stop();
  });

  it('marks suspect points on the record chart by shape, with a legend', async () => {
    const detail = await (await analyst.fetch(`/api/series/${SLUG}`)).json();
    const last = Number(detail.observations.last);
    const interval = Number(detail.intervalMs);
    const override = await analyst.json(`/api/series/${SLUG}/observations/flags`, 'POST', {
      from: last - 5 * interval,
      to: last,
      flag: 3,
      reason: 'probe fouled, cleaned on the next visit',
    });
    expect(override.status).toBe(200);
    const { changed } = await override.json();
    expect(changed).toBeGreaterThan(0);
    await page.goto(`${app.baseUrl}/series/${SLUG}`);
    await expect
      .poll(
        async () => {
          await page.reload();
          await page.waitForLoadState('networkidle');
          return page.locator('[data-testid="flag-suspect"]').count();
        },
        { timeout: 120_000, interval: 3000 },
      )
      .toBeGreaterThan(0);
    await expect(page.getByTestId('flag-legend').first().textContent()).resolves.toMatch(new RegExp(`${changed} flagged points?: ▲ suspect`));
    await page
      .getByTestId('chart-record')
      .first()
      .screenshot({ path: path.join(SHOTS, 'record-flags.png') });
  }, 180_000);

  it('lets a lead set the quality-control tests on the series page and re-run them over the record', async () => {
    await page.goto(`${app.baseUrl}/series/${SLUG}`);
    const panel = page.getByTestId('qc-settings');
    await panel.locator('summary').click();
    await panel.getByLabel('sensor min').fill('-2');
    await panel.getByLabel('sensor max').fill('3.815');
    await panel.getByTestId('change-reason').fill('limits from the sensor maker’s sheet');
    await panel.getByRole('button', { name: 'Save tests' }).click();
    await panel.getByText('Saved.').waitFor();
    await panel.getByRole('button', { name: 'Re-run over the stored record' }).click();
    await expect
      .poll(
        () =>
          panel
            .getByTestId('qc-rerun-result')
            .textContent()
            .catch(() => ''),
        { timeout: 30_000 },
      )
      .toMatch(/points judged, [\d,]+ flags changed\. Now: .*fail/);
    await panel.screenshot({ path: path.join(SHOTS, 'qc-settings.png') });
    const qc = (await (await analyst.fetch(`/api/series/${SLUG}`)).json()).qc;
    expect(qc).toMatchObject({ grossRange: { fail: [-2, 3.815] }, suspectInAnalysis: true });
  }, 120_000);

  it('adds a feed from a sample file, mapping columns by picking', async () => {
    await page.goto(`${app.baseUrl}/feeds`);
    await page.getByTestId('feeds-empty').waitFor();
    await page.getByTestId('feed-sample').setInputFiles({
      name: 'station.csv',
      mimeType: 'text/csv',
      buffer: Buffer.from('TIMESTAMP,temp,temp_qc,cond\n2025-01-01T00:00:00Z,4.1,1,33.2\n2025-01-01T01:00:00Z,4.2,1,33.3\n'),
    });
    await page.getByTestId('feed-mapping').waitFor();
    await page.getByLabel('Feed name').fill('Deep station');
    await page.getByTestId('feed-slug').fill('deep-station');
    await page.getByLabel('Series fed by temp').selectOption(SLUG);
    await expect(page.getByLabel('Flag column of temp').inputValue()).resolves.toBe('temp_qc');
    await page.screenshot({ path: path.join(SHOTS, 'feeds-form.png'), fullPage: true });
    await page.getByRole('button', { name: 'Add feed' }).click();
    await page.getByTestId('feeds-table').waitFor();
    await expect(page.getByTestId('feeds-table').textContent()).resolves.toMatch(/temp → veskary-deep-temperature \(temp_qc\)/);
    await page.screenshot({ path: path.join(SHOTS, 'feeds.png'), fullPage: true });
  }, 120_000);
});
