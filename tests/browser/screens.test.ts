import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Browser, type BrowserContext, type Page } from 'playwright-core';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { launchChromium, SHOTS, shot } from '../support/browser';
import { useDataDir } from '../support/temp-db';

const ROLES = ['admin', 'lead', 'analyst', 'viewer'] as const;
type RoleName = (typeof ROLES)[number];

let app: RunningApp;
let browser: Browser;
const contexts = {} as Record<RoleName, BrowserContext>;
let api: Session;

async function open(role: RoleName, pathname: string): Promise<Page> {
  const page = await contexts[role].newPage();
  await page.goto(app.baseUrl + pathname);
  return page;
}

/**
 * An alert to triage. The analysis job runs every 5 s on the demo data and its slowing-down records should open
 * alerts within a few cycles; we wait up to 60 s for one. If none has opened by then, the test creates one through
 * the models on the app's DATA_DIR (rule and latest snapshot of a demo series), so triage is still exercised.
 */
async function alertToTriage(): Promise<number> {
  const deadline = Date.now() + 60_000;
  while (Date.now() < deadline) {
    const response = await api.fetch('/api/alerts?queue=triage&state=new&pageSize=5');
    const body = await response.json();
    if (body.items?.length) return body.items[0].id;
    await new Promise((r) => setTimeout(r, 2000));
  }
  useDataDir(app.dataDir);
  const { db, Alert, AlertRule, AnalysisSnapshot, OPEN_ALERT_STATES } = await import('@/models');
  await db();
  const snapshot = await AnalysisSnapshot.findOne({ where: { status: 'ok' }, order: [['id', 'DESC']] });
  if (!snapshot) throw new Error('the analysis job stored no snapshot in 60 s');
  const rules = await AlertRule.findAll({ where: { seriesId: snapshot.seriesId } });
  for (const rule of rules) {
    const open = await Alert.findOne({ where: { ruleId: rule.id, state: OPEN_ALERT_STATES as string[] } });
    if (open) continue;
    const alert = await Alert.create({
      seriesId: snapshot.seriesId,
      ruleId: rule.id,
      state: 'new',
      severity: rule.severity,
      assigneeId: null,
      firstSnapshotId: snapshot.id,
      latestSnapshotId: snapshot.id,
      peakTau: null,
      dismissReason: null,
      closedAt: null,
    });
    return alert.id;
  }
  throw new Error('no rule without an open alert to test with');
}

describe('screens in Chromium', () => {
  beforeAll(async () => {
    app = await startApp({ demo: true, env: { ANALYSIS_CRON: '*/5 * * * * *' } });
    browser = await launchChromium();
    api = await signedIn(app.baseUrl, 'analyst@brinkwatch.test', DEMO_PASSWORD);
  });

  afterAll(async () => {
    await browser?.close();
    await app?.stop();
  });

  it('signs in as each role through the sign-in page', async () => {
    for (const role of ROLES) {
      contexts[role] = await browser.newContext({ viewport: { width: 1280, height: 900 } });
      const page = await contexts[role].newPage();
      await page.goto(`${app.baseUrl}/`);
      await page.waitForURL(/\/signin/);
      if (role === 'viewer') await shot(page, 'signin');
      await page.getByLabel('E-mail').fill(`${role}@brinkwatch.test`);
      await page.getByLabel('Password').fill(DEMO_PASSWORD);
      await page.getByRole('button', { name: 'Sign in' }).click();
      await page.waitForURL(`${app.baseUrl}/`);
      await expect.poll(() => page.getByTestId('actor-role').textContent()).toBe(role);
      await page.close();
    }
  });

  it('says on every screen when the scheduler has stopped or the server does not answer, and nothing when all is well', async () => {
    const page = await contexts.analyst.newPage();
    await page.goto(`${app.baseUrl}/alerts`);
    await page.getByRole('heading', { level: 1 }).waitFor();
    await page.waitForLoadState('networkidle');
    await expect(page.getByTestId('system-status').count()).resolves.toBe(0); // this app's scheduler is running
    // The health answer of a scheduler that stopped three hours ago, as GET /api/health gives it (503 when the
    // database is gone, 200 otherwise); the banner reads it either way.
    const stoppedAt = new Date(Date.now() - 3 * 3_600_000).toISOString();
    await page.route('**/api/health', (route) =>
      route.fulfill({
        status: 200,
        contentType: 'application/json',
        body: JSON.stringify({
          ok: true,
          db: { ok: true },
          scheduler: { ok: false, lastBeatAt: stoppedAt, holder: null },
          mail: { ok: false, transport: 'smtp', pending: 0, failed: 1 },
        }),
      }),
    );
    await page.reload();
    const banner = page.getByTestId('system-status');
    await banner.waitFor({ timeout: 20_000 });
    await expect(banner.locator('[data-notice="scheduler"]').textContent()).resolves.toMatch(/last reported at .* \(3 h ago\): no data is taken in/);
    await expect(banner.locator('[data-notice="mail"]').textContent()).resolves.toContain('1 message could not be delivered');
    await shot(page, 'status-scheduler-stopped');
    await page.unroute('**/api/health');
    await page.route('**/api/health', (route) => route.abort('connectionrefused'));
    await page.reload();
    await expect.poll(() => page.locator('[data-notice="unreachable"]').count(), { timeout: 30_000 }).toBe(1);
    await page.close();
  });

  it('lists the demo series on the overview with freshness, state and queue counts', async () => {
    const { items } = await (await api.fetch('/api/series')).json();
    expect(items.length).toBeGreaterThan(0);
    const page = await open('viewer', '/');
    const table = page.getByTestId('overview-table');
    await table.waitFor();
    for (const s of items) await expect(table.locator(`tr[data-series="${s.slug}"]`).count()).resolves.toBe(1);
    await expect(page.locator('[data-freshness]').first().textContent()).resolves.toMatch(/On time|Late|No data/);
    await expect(page.getByRole('note').first().textContent()).resolves.toMatch(/not a forecast/);
    await page.getByLabel('Find a series').fill(items[0].name);
    await expect.poll(() => table.locator('tbody tr').count()).toBeGreaterThanOrEqual(1);
    await page.getByLabel('Find a series').fill('');
    await shot(page, 'overview-1280');
    await page.setViewportSize({ width: 390, height: 844 });
    await shot(page, 'overview-390');
    await page.close();
  });

  it('recomputes the charts and tau when an analyst changes the window', async () => {
    const { items } = await (await api.fetch('/api/series')).json();
    const slug: string = items[0].slug;
    const page = await open('analyst', `/series/${slug}`);
    const legend = page.locator('[data-testid^="trend-"]').first();
    await legend.waitFor({ timeout: 60_000 });
    const before = await legend.textContent();
    const pathBefore = await page
      .getByTestId(/chart-(ac1|variance|sd|cv|skewness|kurtosis|recovery)/)
      .first()
      .locator('path.recharts-curve')
      .first()
      .getAttribute('d');
    const window = page.getByTestId('window-input');
    const current = Number(await window.inputValue());
    await window.fill(String(current > 0.4 ? 0.25 : 0.7));
    await page.getByTestId('preview-flag').waitFor({ timeout: 60_000 });
    await expect.poll(() => legend.textContent(), { timeout: 60_000 }).not.toBe(before);
    const pathAfter = await page
      .getByTestId(/chart-(ac1|variance|sd|cv|skewness|kurtosis|recovery)/)
      .first()
      .locator('path.recharts-curve')
      .first()
      .getAttribute('d');
    expect(pathAfter).not.toBe(pathBefore);
    await shot(page, 'workbench-1280');
    await page.setViewportSize({ width: 390, height: 844 });
    await shot(page, 'workbench-390');
    await page.close();
    const report = await open('viewer', `/series/${slug}/report`);
    await report.getByRole('heading', { level: 1 }).waitFor();
    await shot(report, 'report');
    await report.close();
  });

  it('marks where the live analysis of the collapsed demo record starts, and the abrupt shift it detected', async () => {
    // The salinity record collapses after its marked tipping point: its latest analysis must start after the mark and
    // show the detected shift (issue 13). Reference lines are zero-width SVG lines, so they are counted, not waited
    // on as visible; the page is reloaded until the scheduler has stored the first analysis.
    const page = await open('viewer', '/series/veskary-salinity-contrast');
    await expect
      .poll(
        async () => {
          await page.reload();
          await page.waitForLoadState('networkidle');
          return page.locator('[data-testid="stretch-start"]').count();
        },
        { timeout: 120_000, interval: 3000 },
      )
      .toBeGreaterThan(0);
    await expect(page.locator('[data-testid="shift-marker"]').count()).resolves.toBeGreaterThan(0);
    await expect(page.getByTestId('chart-record').textContent()).resolves.toMatch(/analysed since/);
    await expect(page.locator('[data-testid^="trend-"]').first().textContent()).resolves.toMatch(/tested (rising|falling|either way)/);
    await shot(page, 'workbench-shift');
    await page.close();
  });

  it('lets an analyst take and escalate an alert, a lead confirm it, and shows a viewer no actions', async () => {
    const id = await alertToTriage();
    const analyst = await open('analyst', `/alerts/${id}`);
    await analyst.getByRole('button', { name: 'Take this alert' }).click();
    await expect.poll(() => analyst.getByTestId('alert-state').textContent(), { timeout: 20_000 }).toMatch(/Acknowledged/);
    await analyst.getByRole('button', { name: 'Escalate to a lead' }).click();
    await expect.poll(() => analyst.getByTestId('alert-state').textContent(), { timeout: 20_000 }).toMatch(/Escalated/);
    await expect(analyst.getByRole('button', { name: 'Confirm as a real warning' }).count()).resolves.toBe(0);
    await shot(analyst, 'alert-escalated');
    await analyst.close();

    const viewer = await open('viewer', `/alerts/${id}`);
    await viewer.getByTestId('no-actions').waitFor();
    await expect(viewer.locator('[data-testid="alert-actions"] button').count()).resolves.toBe(0);
    await expect(viewer.getByRole('button', { name: 'Add note' }).count()).resolves.toBe(0);
    await viewer.close();

    const lead = await open('lead', `/alerts/${id}`);
    await lead.getByRole('button', { name: 'Confirm as a real warning' }).click();
    await expect.poll(() => lead.getByTestId('alert-state').textContent(), { timeout: 20_000 }).toMatch(/Confirmed/);
    await expect(lead.getByTestId('timeline').textContent()).resolves.toMatch(/confirmed/);
    await lead.close();

    const queue = await open('lead', '/alerts?queue=closed');
    await queue.locator(`tr[data-alert="${id}"]`).waitFor();
    await shot(queue, 'alerts-closed');
    // the series filter searches as one types (components/SeriesPicker.tsx) and keeps the choice in the address
    const seriesName = (await queue.locator(`tr[data-alert="${id}"] td`).nth(1).textContent())!.trim();
    const picker = queue.getByRole('combobox', { name: 'Series' });
    await picker.fill(seriesName.slice(0, 6));
    await queue.getByRole('option', { name: new RegExp(seriesName) }).click();
    await expect.poll(() => new URL(queue.url()).searchParams.get('series'), { timeout: 20_000 }).toBeTruthy();
    const shownSeries = async () => [
      ...new Set((await queue.locator('[data-testid="alert-table"] tbody tr td:nth-child(2)').allTextContents()).map((n) => n.trim())),
    ];
    await expect.poll(shownSeries, { timeout: 20_000 }).toEqual([seriesName]);
    await queue.locator(`tr[data-alert="${id}"]`).waitFor();
    await shot(queue, 'alerts-closed-one-series');
    await queue.getByRole('button', { name: /Show all series instead/ }).click();
    await expect.poll(() => new URL(queue.url()).searchParams.get('series'), { timeout: 20_000 }).toBeNull();
    await queue.close();
  }, 180_000);

  it('runs a backtest from the series page as a lead: progress, lead times before the marked tipping point, false alarms', async () => {
    const { items } = await (await api.fetch('/api/series')).json();
    let slug: string | null = null;
    for (const s of items as { slug: string }[]) {
      const marked = await (await api.fetch(`/api/series/${s.slug}/marks`)).json();
      if ((marked.marks ?? []).length) {
        slug = s.slug;
        break;
      }
    }
    expect(slug, 'a demo series with a marked tipping point').not.toBeNull();
    const page = await open('lead', `/series/${slug}`);
    const panel = page.getByRole('region', { name: 'Backtest' });
    await panel.getByRole('button', { name: 'Start backtest' }).waitFor();
    await panel.getByRole('spinbutton', { name: 'Judge every (points)' }).fill('25');
    await panel.getByRole('spinbutton', { name: 'Surrogates', exact: true }).fill('9');
    await panel.getByRole('button', { name: 'Start backtest' }).click();
    const table = panel.getByRole('table', { name: 'Lead times' });
    await table.waitFor({ timeout: 150_000 });
    expect(await table.locator('tbody tr').count()).toBeGreaterThanOrEqual(1);
    await expect(panel.getByText('Points replayed').count()).resolves.toBe(1);
    await expect(panel.getByText(/replays \(95 % interval/).count()).resolves.toBe(1);
    // the list of past backtests follows the job to its end
    await expect.poll(() => panel.getByRole('combobox', { name: 'Showing' }).locator('option').first().textContent(), { timeout: 20_000 }).toMatch(/succeeded/);
    await panel.screenshot({ path: path.join(SHOTS, 'backtest-panel.png') });
    await page.close();
  }, 200_000);

  it('takes in a CSV through the upload flow of the Intake screen (labels from components/intake/UploadPanel.tsx)', async () => {
    const lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    const created = await lead.json('/api/series', 'POST', {
      slug: 'browser-upload-check',
      name: 'Upload check',
      site: 'Test bench',
      intervalMs: 86_400_000,
      csvMapping: { timeColumn: 'time', valueColumn: 'value', timeFormat: 'iso8601' },
    });
    expect(created.status).toBe(201);
    const lines = ['time,value'];
    for (let i = 0; i < 40; i++) lines.push(`${new Date(Date.UTC(2025, 0, 1 + i)).toISOString()},${(10 + Math.sin(i / 3)).toFixed(3)}`);
    const page = await open('lead', '/intake');
    const panel = page.getByTestId('upload-panel');
    await panel.waitFor();
    // no series is preselected: the file input appears once one is chosen in the search box
    await expect(panel.locator('input[type="file"]').count()).resolves.toBe(0);
    await panel.getByRole('combobox', { name: 'Series' }).fill('upload che');
    await panel.getByRole('option', { name: /Upload check/ }).click();
    await panel.locator('input[type="file"]').setInputFiles({ name: 'upload-check.csv', mimeType: 'text/csv', buffer: Buffer.from(lines.join('\n') + '\n') });
    await panel.getByTestId('validation-summary').waitFor({ timeout: 30_000 });
    await panel.getByRole('button', { name: /^Commit 40 points/ }).click();
    await expect.poll(() => panel.getByTestId('commit-outcome').textContent(), { timeout: 30_000 }).toMatch(/Run #\d+/);
    await shot(page, 'intake-upload');
    await page.close();
    const extent = await (await lead.fetch('/api/series/browser-upload-check/observations')).json();
    expect(extent.count).toBe(40);
  });

  it('shows the admin screens and the account page', async () => {
    for (const [role, pathname, name] of [
      ['admin', '/admin', 'admin-users'],
      ['admin', '/admin/tokens', 'admin-tokens'],
      ['admin', '/admin/mail', 'admin-mail'],
      ['admin', '/admin/audit', 'admin-audit'],
      ['analyst', '/account', 'account'],
    ] as const) {
      const page = await open(role, pathname);
      await page.getByRole('heading', { level: 1 }).waitFor();
      if (pathname === '/admin/tokens') {
        // chosen by keyboard this time, Enter at once: before the matches of the text arrived, the list still shows
        // every series, and Enter must wait for the right matches rather than take the first of those
        const picker = page.getByRole('combobox', { name: 'Series' });
        await picker.focus();
        await page.getByRole('option').first().waitFor();
        await picker.fill('upload check');
        await picker.press('Enter');
        await page.getByText('No tokens for this series.').waitFor();
        await expect(picker.getAttribute('placeholder')).resolves.toBe('Upload check');
        await expect(page.getByRole('listbox', { name: 'Series matches' }).isHidden()).resolves.toBe(true);
        // Enter after the typing pause but before the slow answer to it arrived chooses that answer's first match
        // (it once did nothing: the list was empty while the answer was on its way).
        await page.route('**/api/series?*', async (route) => {
          await new Promise((r) => setTimeout(r, 1500));
          await route.continue();
        });
        await picker.fill('salinity');
        await page.waitForTimeout(600);
        await picker.press('Enter');
        await expect.poll(() => picker.getAttribute('placeholder'), { timeout: 20_000 }).toMatch(/salinity/i);
        await page.unroute('**/api/series?*');
      }
      if (pathname === '/account') {
        const mail = page.getByRole('region', { name: 'Mail about each series' });
        await mail.locator('li').first().waitFor();
        const all = await mail.locator('li').count();
        await page.getByRole('searchbox', { name: 'Find a series' }).fill('salinity');
        await expect.poll(() => mail.locator('li').count()).toBe(1);
        await page.getByRole('searchbox', { name: 'Find a series' }).fill('');
        await expect.poll(() => mail.locator('li').count()).toBe(all);
      }
      await page.waitForLoadState('networkidle');
      // Next.js keeps its own route announcer (role="alert") outside <main>; ours sit inside.
      await expect(page.locator('main [role="alert"]').count()).resolves.toBe(0);
      await shot(page, name);
      await page.close();
    }
  });
});
