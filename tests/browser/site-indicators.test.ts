import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Browser, type Page } from 'playwright-core';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { launchChromium, SHOTS, signInPage } from '../support/browser';

// The demo's mooring: a daily salinity contrast and an hourly deep temperature (lib/demo/scenario.ts).
const SITE = 'veskary-sound-mooring';
const SERIES = 'veskary-deep-temperature';

let app: RunningApp;
let browser: Browser;
let page: Page;
let lead: Session;

describe('site-level indicators, the restoring-rate band and the stride setting in Chromium', () => {
  beforeAll(async () => {
    app = await startApp({ demo: true, env: { ANALYSIS_CRON: '*/5 * * * * *' } });
    browser = await launchChromium();
    lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    page = await (await browser.newContext({ viewport: { width: 1280, height: 900 } })).newPage();
    await signInPage(page, app.baseUrl, 'lead');
  }, 180_000);

  afterAll(async () => {
    await browser?.close();
    await app?.stop();
  });

  it('the site page shows the indicators across its series, computed by the scheduler', async () => {
    await expect
      .poll(async () => (await (await lead.fetch(`/api/sites/${SITE}/analysis`)).json()).state, { timeout: 150_000, interval: 3000 })
      .not.toBe('none');
    const stored = await (await lead.fetch(`/api/sites/${SITE}/analysis`)).json();
    expect(stored.error).toBeNull();
    expect(stored.state).toBe('ok');
    await page.goto(`${app.baseUrl}/sites/${SITE}`);
    const panel = page.getByTestId('site-indicators');
    await panel.waitFor();
    for (const name of ['pc1-variance', 'pc1-share', 'maf-ac1']) {
      await expect(page.getByTestId(`site-row-${name}`).textContent()).resolves.toMatch(/τ = .*tested rising/);
      await page.getByTestId(`site-chart-${name}`).locator('.recharts-line').first().waitFor();
    }
    await panel.screenshot({ path: path.join(SHOTS, 'site-indicators.png') });
  }, 200_000);

  it('a lead puts a rule on a site indicator from the site page; the scheduler judges it and opens an alert on the site', async () => {
    await page.goto(`${app.baseUrl}/sites/${SITE}`);
    const form = page.getByTestId('site-rule-form');
    await form.waitFor();
    await page.getByTestId('site-rule-indicator').selectOption('pc1-variance');
    // τ ≥ −1 is met by any defined trend, and no surrogate test: the check is of the screens and the procedure
    await form.getByLabel('Kendall τ at least (rising)').fill('-1');
    await form.getByLabel('Surrogate p at most').fill('');
    await form.getByTestId('change-reason').fill('watching the mooring as a whole');
    await form.getByRole('button', { name: 'Add the rule' }).click();
    const rows = page.getByTestId('site-rules').locator('tbody tr');
    await expect.poll(() => rows.count(), { timeout: 20_000 }).toBe(1);
    // the scheduler judges the site's latest snapshot for a rule that has not judged it yet, within a cycle or two
    const alertLink = rows.first().getByRole('link', { name: /^#\d+/ });
    await expect
      .poll(
        async () => {
          await page.reload();
          await page.waitForLoadState('networkidle');
          return alertLink.count();
        },
        { timeout: 120_000, interval: 3000 },
      )
      .toBe(1);
    await expect(rows.first().getByTestId('site-rule-standing').textContent()).resolves.toMatch(/^met/);
    await page.getByTestId('site-rules').screenshot({ path: path.join(SHOTS, 'site-rules.png') });
    await alertLink.click();
    await expect(page.getByRole('heading', { level: 1 }).textContent()).resolves.toMatch(/on site /);
    await page.getByTestId('site-chart-pc1-variance').locator('.recharts-line').first().waitFor();
    await expect(page.getByTestId('site-chart-maf-ac1').count()).resolves.toBe(0);
    // a reviewer is handed the grid the site analysis saw and the command that recomputes it
    await expect(page.getByTestId('provenance-command').first().textContent()).resolves.toMatch(/^brinkwatch analyze .*--multivariate --value .* --summary$/);
    const href = await page
      .getByRole('link', { name: /^Download the analysed data/ })
      .first()
      .getAttribute('href');
    const download = await lead.fetch(href!);
    expect(download.status).toBe(200);
    expect(download.headers.get('x-brinkwatch-data-matches')).toBe('true');
    expect(await download.text()).toMatch(/^# site: \{"detrending":/m);
    // a member series' page says so and links its site
    await page.goto(`${app.baseUrl}/series/${SERIES}`);
    await expect(page.getByTestId('series-site-alert').textContent()).resolves.toMatch(
      /An alert is open on the indicators across the series of Veskary Sound Mooring/,
    );
    await expect(page.getByTestId('series-site').getAttribute('href')).resolves.toBe(`/sites/${SITE}`);
    // the overview, whose rows are series, names the site with its open site alert and leads to the site page
    await page.goto(`${app.baseUrl}/`);
    const strip = page.getByTestId('overview-site-alerts');
    await expect(strip.locator(`[data-site="${SITE}"]`).textContent()).resolves.toMatch(/Veskary Sound Mooring\s*1 open alert on the site-level indicators/);
    await strip.screenshot({ path: path.join(SHOTS, 'overview-site-alerts.png') });
    await strip.getByRole('link', { name: 'Veskary Sound Mooring' }).click();
    await page.waitForURL(`**/sites/${SITE}#site-indicators`);
    // the alert queue filtered by the site lists the site alert, kept in the address
    await page.goto(`${app.baseUrl}/alerts`);
    await page.getByTestId('alert-site-filter').selectOption(SITE);
    await page.waitForURL(`**/alerts?*site=${SITE}*`);
    await expect.poll(async () => page.locator('[data-kind="site-slowing-down"]').count(), { timeout: 20_000 }).toBe(1);
    await page.screenshot({ path: path.join(SHOTS, 'alerts-one-site.png') });
    const listed = (await (await lead.fetch(`/api/alerts?queue=triage&site=${SITE}`)).json()).items as { on: { kind: string } }[];
    expect(listed.filter((item) => item.on.kind === 'site')).toHaveLength(1);
  }, 200_000);

  it('a series computing the restoring rate draws its ±1.96 SE band, and its settings offer the stride', async () => {
    const detail = await (await lead.fetch(`/api/series/${SERIES}`)).json();
    const settings = { ...detail.settings, indicators: [...detail.settings.indicators, 'restoring-rate'], maxEvaluatedWindows: 60 };
    const saved = await lead.json(`/api/series/${SERIES}`, 'PATCH', { settings });
    expect(saved.status).toBe(200);
    // which charts the series page shows is the reader's choice: the lead asks for the restoring rate's
    expect((await lead.json('/api/account/preferences', 'PUT', { seriesCharts: ['record', 'restoring-rate'] })).status).toBe(200);
    await page.goto(`${app.baseUrl}/series/${SERIES}`);
    await expect
      .poll(
        async () => {
          await page.reload();
          await page.waitForLoadState('networkidle');
          return page.getByTestId('band-restoring-rate').count();
        },
        { timeout: 150_000, interval: 3000 },
      )
      .toBeGreaterThan(0);
    await expect(page.getByTestId('band-restoring-rate').first().textContent()).resolves.toContain('± 1.96 standard errors');
    const chart = page.getByTestId('chart-restoring-rate').first();
    await expect(chart.locator('.recharts-line').count()).resolves.toBe(3);
    await chart.screenshot({ path: path.join(SHOTS, 'restoring-rate-band.png') });

    await page.goto(`${app.baseUrl}/series/${SERIES}/settings`);
    await expect(page.getByLabel('Most windows per costly indicator').inputValue()).resolves.toBe('60');
  }, 200_000);
});
