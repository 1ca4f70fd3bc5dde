import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Browser, type BrowserContext } from 'playwright-core';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { simulateAr1 } from '@/lib/demo/models';
import { launchChromium, SHOTS, signedInContext } from '../support/browser';

/**
 * A lead's first morning, end to end on the started product with its scheduler and no demo network: a site and a
 * series registered on screen, a file dropped into the series' folder and analysed, a rule written with the
 * editor, its verdict on the latest analysis and a backtest of it.
 */
const SLUG = 'journey-reservoir-oxygen';
const DAY = 86_400_000;

let app: RunningApp;
let browser: Browser;
let lead: BrowserContext;
let api: Session;

/** 400 daily readings whose lag-1 autocorrelation rises half-way (AR(1), φ 0.3 then 0.9), ending yesterday. */
function stationFile(): string {
  const n = 400;
  const calm = simulateAr1({ n: n / 2, phi: 0.3, sigma: 0.2, mean: 9, seed: 5 });
  const slowing = simulateAr1({ n: n / 2, phi: 0.9, sigma: 0.2, mean: 9, seed: 6 });
  const end = Math.floor(Date.now() / DAY) * DAY - DAY;
  const rows = [...calm, ...slowing].map((v, i) => `${new Date(end - (n - 1 - i) * DAY).toISOString()},${v.toFixed(4)}`);
  return `time,oxygen\n${rows.join('\n')}\n`;
}

describe('a lead sets up monitoring on screen (Chromium)', () => {
  beforeAll(async () => {
    app = await startApp({
      demo: false,
      scheduler: true,
      env: { INGEST_CRON: '*/2 * * * * *', ANALYSIS_CRON: '*/3 * * * * *', BACKTEST_CRON: '*/2 * * * * *' },
    });
    browser = await launchChromium();
    api = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    lead = await signedInContext(browser, app.baseUrl, 'lead');
  }, 600_000);

  afterAll(async () => {
    await browser?.close();
    await app?.stop();
  });

  it('registers a site and a series, sees a dropped file analysed, writes a rule with its verdict and backtests it', async () => {
    const page = await lead.newPage();
    await page.goto(`${app.baseUrl}/sites`);
    const siteForm = page.getByTestId('site-form');
    await siteForm.getByLabel('Name').fill('Journey Reservoir');
    await siteForm.getByLabel('Latitude').fill('60.20');
    await siteForm.getByLabel('Longitude').fill('6.10');
    await siteForm.getByRole('button', { name: 'Add the site' }).click();
    await page.waitForURL(/\/sites\/journey-reservoir$/);

    await page.goto(`${app.baseUrl}/series/new`);
    const form = page.getByTestId('series-form');
    await form.getByLabel('Name', { exact: true }).fill('Journey reservoir oxygen');
    await expect.poll(() => form.getByLabel('Slug').inputValue()).toBe(SLUG);
    await form.getByLabel('Site').selectOption({ label: 'Journey Reservoir' });
    await form.getByLabel('Unit', { exact: true }).fill('mg/L');
    await form.getByLabel('Interval count').fill('1');
    await form.getByLabel('Interval unit').selectOption('days');
    await form.getByRole('button', { name: 'Register the series' }).click();
    await page.waitForURL(new RegExp(`/series/${SLUG}$`));

    // The station's logger drops a complete file into the series' folder (written aside, then renamed into place).
    const folder = path.join(app.dataDir, 'drops', SLUG);
    fs.mkdirSync(folder, { recursive: true });
    fs.writeFileSync(path.join(folder, '.first-export.csv.part'), stationFile());
    fs.renameSync(path.join(folder, '.first-export.csv.part'), path.join(folder, 'first-export.csv'));

    // Taken in by the intake job, then analysed by the analysis job: the page leads with the evidence table.
    await expect
      .poll(
        async () => {
          await page.reload();
          return page.getByTestId('evidence-table').count();
        },
        { timeout: 180_000, interval: 3_000 },
      )
      .toBeGreaterThan(0);
    const runs = await (await api.fetch(`/api/ingest-runs?series=${SLUG}`)).json();
    expect(JSON.stringify(runs)).toContain('first-export.csv');
    await page.getByTestId('trend-ac1').waitFor();

    await page.getByTestId('rule-new').click();
    const editor = page.getByTestId('rule-editor');
    await editor.getByTestId('rule-template').selectOption('variance-rising');
    const preview = editor.getByTestId('rule-preview');
    await preview.waitFor({ timeout: 60_000 });
    await expect(preview.getAttribute('data-verdict')).resolves.toMatch(/^(passes|fails|cannot-judge)$/);
    await editor.getByRole('button', { name: 'Save rule' }).click();
    await editor.waitFor({ state: 'detached', timeout: 30_000 });
    const { items: rules } = await (await api.fetch(`/api/series/${SLUG}/rules`)).json();
    const rule = (rules as { id: number; indicator: string }[]).find((r) => r.indicator === 'variance');
    expect(rule, 'the rule written in the editor').toBeDefined();
    await page.getByTestId(`rule-edit-${rule!.id}`).click();
    await editor.getByTestId('rule-backtest').click();
    await editor.getByTestId('rule-backtest-started').waitFor({ timeout: 30_000 });
    const { backtests } = await (await api.fetch(`/api/backtests?rule=${rule!.id}`)).json();
    expect(backtests.length).toBeGreaterThan(0);
    await page.screenshot({ path: path.join(SHOTS, 'journey-series.png'), fullPage: true });
    await page.close();
  }, 420_000);
});
