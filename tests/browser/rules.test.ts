import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Browser, type BrowserContext, type Page } from 'playwright-core';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { launchChromium, shot, signedInContext } from '../support/browser';

let app: RunningApp;
let browser: Browser;
const contexts: Partial<Record<'lead' | 'viewer', BrowserContext>> = {};
let leadApi: Session, viewerApi: Session;
let slug: string;

async function open(role: 'lead' | 'viewer', pathname: string): Promise<Page> {
  const page = await contexts[role]!.newPage();
  await page.goto(app.baseUrl + pathname);
  return page;
}

describe('rules, who hears and chart choice on the series page (Chromium)', () => {
  beforeAll(async () => {
    app = await startApp({ demo: true, env: { ANALYSIS_CRON: '*/5 * * * * *' } });
    browser = await launchChromium();
    [leadApi, viewerApi] = await Promise.all([
      signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD),
      signedIn(app.baseUrl, 'viewer@brinkwatch.test', DEMO_PASSWORD),
    ]);
    contexts.lead = await signedInContext(browser, app.baseUrl, 'lead');
    contexts.viewer = await signedInContext(browser, app.baseUrl, 'viewer');
    // a demo series once the scheduler has analysed it, so the draft has something to be judged on
    const { items } = await (await leadApi.fetch('/api/series')).json();
    slug = items[0].slug;
    const deadline = Date.now() + 120_000;
    for (;;) {
      const answer = await (await leadApi.json(`/api/series/${slug}/rules/preview`, 'POST', { rule: { indicator: 'ac1', minTau: 0.3 } })).json();
      if (answer.snapshot?.status === 'ok') break;
      if (Date.now() > deadline) throw new Error(`${slug} was not analysed within 120 s`);
      await new Promise((r) => setTimeout(r, 2000));
    }
  }, 600_000);

  afterAll(async () => {
    await browser?.close();
    await app?.stop();
  });

  it('a lead writes a rule from a template, sees what it says now, saves it, and backtests an edited draft', async () => {
    const page = await open('lead', `/series/${slug}`);
    await page.getByTestId('evidence-table').waitFor();
    await page.getByTestId('rule-new').click();
    const editor = page.getByTestId('rule-editor');
    await editor.getByTestId('rule-template').selectOption('variance-rising');
    await expect.poll(() => editor.getByTestId('rule-indicator').inputValue()).toBe('variance');
    const preview = editor.getByTestId('rule-preview');
    await preview.waitFor({ timeout: 30_000 });
    await expect(preview.getAttribute('data-verdict')).resolves.toMatch(/^(passes|fails|cannot-judge)$/);
    await expect(preview.textContent()).resolves.toMatch(/On the latest analysis/);
    // the live preview follows the draft: an impossible tau threshold cannot pass
    await editor.getByTestId('rule-min-tau').fill('1');
    await expect.poll(() => preview.getAttribute('data-verdict'), { timeout: 30_000 }).toMatch(/^(fails|cannot-judge)$/);
    await editor.getByTestId('rule-min-tau').fill('0.3');
    await editor.getByRole('button', { name: 'Save rule' }).click();
    await editor.waitFor({ state: 'detached', timeout: 30_000 });
    const rules = (await (await leadApi.fetch(`/api/series/${slug}/rules`)).json()).items as { id: number; indicator: string; maxSurrogateP: number | null }[];
    const created = rules.find((r) => r.indicator === 'variance' && r.maxSurrogateP === 0.05);
    expect(created, 'the rule written in the editor').toBeDefined();
    await page.getByTestId('rule-statuses').locator(`li[data-rule="${created!.id}"]`).waitFor();

    await page.getByTestId(`rule-edit-${created!.id}`).click();
    // Editing a stored rule asks why; the reason goes with the change into the audit and period reports.
    await expect(editor.getByTestId('change-reason').evaluate((input) => (input as HTMLInputElement).required)).resolves.toBe(true);
    await editor.getByTestId('rule-min-tau').fill('0.4');
    await editor.getByTestId('rule-backtest').click();
    await editor.getByTestId('rule-backtest-started').waitFor({ timeout: 30_000 });
    const jobs = (await (await leadApi.fetch(`/api/backtests?rule=${created!.id}`)).json()).backtests as { params: { draft?: { minTau: number } } }[];
    expect(jobs[0].params.draft?.minTau).toBe(0.4);
    // the stored rule is unchanged until the draft is saved
    expect((await (await leadApi.fetch(`/api/series/${slug}/rules`)).json()).items.find((r: { id: number }) => r.id === created!.id).minTau).toBe(0.3);
    await page.getByTestId('who-hears').waitFor();
    await shot(page, 'rule-editor');
    await page.close();
  }, 180_000);

  it('a viewer sees no editing controls, and the server refuses a viewer’s rule anyway', async () => {
    const page = await open('viewer', `/series/${slug}`);
    await page.getByTestId('evidence-table').waitFor();
    await page.getByTestId('rule-statuses').waitFor();
    await expect(page.getByTestId('rule-new').count()).resolves.toBe(0);
    await expect(page.locator('[data-testid^="rule-edit-"]').count()).resolves.toBe(0);
    await expect(page.getByTestId('who-hears').count()).resolves.toBe(0);
    expect((await viewerApi.json(`/api/series/${slug}/rules`, 'POST', { indicator: 'ac1', minTau: 0.3 })).status).toBe(403);
    expect((await viewerApi.json(`/api/series/${slug}/watchers`, 'PUT', { watchers: [{ userId: 1, mode: 'none' }] })).status).toBe(403);
    await page.close();
  });

  it('remembers which charts a reader chose, and in what order, after a reload', async () => {
    const page = await open('viewer', `/series/${slug}`);
    const chooser = page.getByTestId('chart-chooser');
    await chooser.waitFor();
    await chooser.getByTestId('chart-choice-residuals').check();
    for (let k = 0; k < 3; k++) await chooser.getByRole('button', { name: 'Move Residuals up' }).click();
    await expect.poll(async () => (await (await viewerApi.fetch('/api/account/preferences')).json()).seriesCharts[0], { timeout: 20_000 }).toBe('residuals');
    await page.reload();
    await page.getByTestId('chart-residuals').waitFor();
    await expect(page.locator('figure[data-testid^="chart-"]').first().getAttribute('data-testid')).resolves.toBe('chart-residuals');
    await expect(page.getByTestId('chart-choice-residuals').isChecked()).resolves.toBe(true);
    await shot(page, 'series-charts-chosen');
    await page.close();
  }, 120_000);
});
