import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Browser, type BrowserContext } from 'playwright-core';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { launchChromium, shot, signedInContext } from '../support/browser';

let app: RunningApp;
let browser: Browser;
let lead: BrowserContext;
let viewer: BrowserContext;
let api: Session;

async function seriesStatus(slug: string): Promise<number> {
  const response = await api.fetch(`/api/series/${slug}`);
  await response.arrayBuffer();
  return response.status;
}

describe('registration screens in Chromium', () => {
  beforeAll(async () => {
    app = await startApp({ demo: true, scheduler: false });
    browser = await launchChromium();
    api = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    lead = await signedInContext(browser, app.baseUrl, 'lead');
    viewer = await signedInContext(browser, app.baseUrl, 'viewer');
  });

  afterAll(async () => {
    await browser?.close();
    await app?.stop();
  });

  it('registers a series on screen: slug suggested from the name, a site picked, then its page', async () => {
    const page = await lead.newPage();
    await page.goto(`${app.baseUrl}/`);
    await page.getByRole('link', { name: 'Register a series' }).click();
    await page.waitForURL(/\/series\/new$/);
    const form = page.getByTestId('series-form');
    await form.getByLabel('Name', { exact: true }).fill('Browser fjord temperature');
    await expect.poll(() => form.getByLabel('Slug').inputValue()).toBe('browser-fjord-temperature');
    await form.getByLabel('Site').selectOption({ index: 1 });
    const siteName = (await form.getByLabel('Site').locator('option:checked').textContent())!;
    await form.getByLabel('Unit', { exact: true }).fill('°C');
    await form.getByLabel('Interval count').fill('30');
    await form.getByLabel('Interval unit').selectOption('minutes');
    await form.getByLabel('Rolling window').fill('not a window');
    await form.getByRole('button', { name: 'Register the series' }).click();
    // The server's field error shows beside the field; nothing is registered.
    await form.getByText(/must be a fraction/).waitFor();
    expect(await seriesStatus('browser-fjord-temperature')).toBe(404);
    await shot(page, 'register-series-error');
    await form.getByLabel('Rolling window').fill('0.4');
    await form.getByRole('button', { name: 'Register the series' }).click();
    await page.waitForURL(/\/series\/browser-fjord-temperature$/);
    await expect(page.getByRole('heading', { level: 1 }).textContent()).resolves.toBe('Browser fjord temperature');
    const stored = await (await api.fetch('/api/series/browser-fjord-temperature')).json();
    expect(stored).toMatchObject({ site: siteName, unit: '°C', intervalMs: 1_800_000, settings: { window: 0.4, surrogates: 199 } });

    await page.getByTestId('series-settings-link').click();
    await page.waitForURL(/\/settings$/);
    await page.getByTestId('series-form').getByLabel('Unit', { exact: true }).fill('K');
    await page.getByRole('button', { name: 'Save the changes' }).click();
    await page.getByText('✓ Saved').waitFor();
    await page.getByRole('button', { name: 'Retire the series' }).click();
    await page.getByRole('button', { name: 'Restore the series' }).waitFor();
    expect(await (await api.fetch('/api/series/browser-fjord-temperature')).json()).toMatchObject({ unit: 'K', retired: true });
    await shot(page, 'series-settings-retired');
    await page.close();
  });

  it('previews a bulk list with a bad row, creates nothing, then registers the fixed list whole', async () => {
    const page = await lead.newPage();
    await page.goto(`${app.baseUrl}/series/bulk`);
    const bad = 'slug,name,site,interval\nbrowser-bulk-1,Bulk one,Browser shoal,PT1H\nbrowser-bulk-2,Bulk two,Browser shoal,hourly\n';
    await page.getByTestId('bulk-text').fill(bad);
    await page.getByRole('button', { name: 'Check the list' }).click();
    const preview = page.getByTestId('bulk-preview');
    await preview.waitFor();
    await expect(preview.locator('tr[data-row="2"][data-valid="false"]').getByTestId('row-errors').textContent()).resolves.toContain(
      'interval: Write the interval as an ISO 8601 duration',
    );
    await expect(preview.locator('tr[data-row="1"]').getAttribute('data-valid')).resolves.toBe('true');
    await expect(page.getByTestId('bulk-create').isDisabled()).resolves.toBe(true);
    await shot(page, 'bulk-preview-error');
    expect(await seriesStatus('browser-bulk-1')).toBe(404);

    await page.getByTestId('bulk-text').fill(bad.replace('hourly', 'PT1H'));
    await expect(page.getByTestId('bulk-create').isDisabled()).resolves.toBe(true); // an edited list is checked again
    await page.getByRole('button', { name: 'Check the list' }).click();
    await page.getByRole('button', { name: 'Register all 2 series' }).click();
    await expect(page.getByTestId('bulk-created').textContent()).resolves.toContain('2 series registered, with 1 new sites');
    expect(await seriesStatus('browser-bulk-1')).toBe(200);
    expect(await (await api.fetch('/api/series/browser-bulk-2')).json()).toMatchObject({ site: 'Browser shoal', intervalMs: 3_600_000 });
    await page.close();
  });

  it("answers an unknown address with HTTP 404 and the app's own page", async () => {
    const page = await viewer.newPage();
    for (const pathname of ['/series/no-such-series', '/alerts/999999', '/sites/none']) {
      const response = await page.goto(`${app.baseUrl}${pathname}`);
      expect(response!.status(), pathname).toBe(404);
      await page.getByTestId('not-found').waitFor();
      await expect(page.getByRole('navigation', { name: 'Main' }).isVisible()).resolves.toBe(true); // inside the app's frame
    }
    await shot(page, 'not-found');
    const outside = await page.goto(`${app.baseUrl}/no/such/page`);
    expect(outside!.status()).toBe(404);
    await page.getByTestId('not-found').waitFor();
    await page.close();
  });

  it('shows sites on a map and a site page with its series; a viewer sees no editing controls', async () => {
    const page = await viewer.newPage();
    await page.goto(`${app.baseUrl}/`);
    // The overview groups its rows under one heading row per site.
    const table = page.getByTestId('overview-table');
    await expect(table.locator('tr[data-site-group]').count()).resolves.toBe(0);
    await page.getByTestId('group-by-site').check();
    const { items: sites } = await (await api.fetch('/api/sites')).json();
    const withSeries = sites.filter((site: { seriesCount: number }) => site.seriesCount > 0).length;
    await expect.poll(() => table.locator('tr[data-site-group]').count()).toBe(withSeries);
    await shot(page, 'overview-by-site');
    await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Sites' }).click();
    await page.waitForURL(/\/sites$/);
    await page.getByTestId('site-map').waitFor();
    await expect(page.getByTestId('site-form').count()).resolves.toBe(0);
    const first = page.getByTestId('sites-table').locator('tbody tr').first();
    const name = (await first.getByRole('link').textContent())!;
    await first.getByRole('link').click();
    await page.waitForURL(/\/sites\/[a-z0-9-]+$/);
    await expect(page.getByRole('heading', { level: 1 }).textContent()).resolves.toBe(name);
    await expect(page.getByTestId('overview-table').locator('tbody tr[data-series]').count()).resolves.toBeGreaterThan(0);
    await expect(page.getByTestId('site-form').count()).resolves.toBe(0);
    await shot(page, 'site-page-viewer');

    await page.goto(`${app.baseUrl}/series/new`);
    await page.getByTestId('role-needed').waitFor();
    await page.close();

    const leadPage = await lead.newPage();
    await leadPage.goto(`${app.baseUrl}/sites`);
    const form = leadPage.getByTestId('site-form');
    await form.getByLabel('Name').fill('Browser quay');
    await form.getByLabel('Latitude').fill('60.3913');
    await form.getByLabel('Longitude').fill('5.3221');
    await form.getByRole('button', { name: 'Add the site' }).click();
    await leadPage.waitForURL(/\/sites\/browser-quay$/);
    await leadPage.getByTestId('site-map').locator('circle').first().waitFor();
    await shot(leadPage, 'site-page-lead');
    await leadPage.close();
  });
});
