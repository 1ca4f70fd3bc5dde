import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Browser, type Page } from 'playwright-core';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { launchChromium, signInPage, SHOTS } from '../support/browser';
import type { DataVersionsOverview, ReanalysisRecord } from '@/lib/analysis/reanalysis-record';

const SLUG = 'veskary-deep-temperature';

let app: RunningApp;
let browser: Browser;
let page: Page;
let lead: Session;
let viewer: Session;

describe('reprocessed data and re-analysis on an earlier version, in the started product and in Chromium', () => {
  beforeAll(async () => {
    app = await startApp({ demo: true, env: { ANALYSIS_CRON: '*/5 * * * * *' } });
    browser = await launchChromium();
    lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    viewer = await signedIn(app.baseUrl, 'viewer@brinkwatch.test', DEMO_PASSWORD);
    page = await (await browser.newContext({ viewport: { width: 1280, height: 900 } })).newPage();
    await signInPage(page, app.baseUrl, 'lead');
  }, 600_000);

  afterAll(async () => {
    await browser?.close();
    await app?.stop();
  });

  it('a reprocessing upload with a reason makes a data version (the series keeps its own policy); a pushed point keeps its flag', async () => {
    const detail = await (await lead.fetch(`/api/series/${SLUG}`)).json();
    const last = Number(detail.observations.last);
    const interval = Number(detail.intervalMs);
    const stored = await (await lead.fetch(`/api/series/${SLUG}/observations?from=${last - 2 * interval}&to=${last}`)).json();
    const form = new FormData();
    const csv = `time,value\n${stored.items.map((p: { time: string; value: number }) => `${p.time},${p.value + 0.25}`).join('\n')}\n`;
    form.set('file', new File([csv], 'reprocessed.csv', { type: 'text/csv' }));
    // A reprocessing upload: the series keeps its policy (reject); this delivery replaces, and says why.
    form.set('duplicatePolicy', 'replace');
    const withoutReason = await lead.fetch(`/api/series/${SLUG}/uploads`, { method: 'POST', body: form });
    expect(withoutReason.status).toBe(422);
    expect((await withoutReason.json()).error.fields.reason).toBeDefined();
    form.set('reason', 'offset of the logger corrected');
    const upload = await lead.fetch(`/api/series/${SLUG}/uploads`, { method: 'POST', body: form });
    expect(upload.status).toBe(200);
    expect((await upload.json()).replaced).toBe(stored.items.length);
    const push = await lead.fetch(`/api/series/${SLUG}/observations`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify([{ time: new Date(last + 1000 * interval).toISOString(), value: 4, flag: 3 }]),
    });
    expect(push.status).toBe(200);
    const overruling = await lead.fetch(`/api/series/${SLUG}/observations?duplicatePolicy=replace`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify([{ time: new Date(last).toISOString(), value: 5 }]),
    });
    expect(overruling.status).toBe(422);
    expect((await push.json()).flaggedBy).toEqual({ suspect: { source: 1 } });
    const overview: DataVersionsOverview = await (await viewer.fetch(`/api/series/${SLUG}/data-versions`)).json();
    expect(overview.versions.find((v) => v.reason === 'offset of the logger corrected')).toMatchObject({
      replaced: stored.items.length,
      fileName: 'reprocessed.csv',
    });
  }, 60_000);

  it('only a lead may re-analyse; a version the series has not reached is a 422 on the field', async () => {
    expect((await viewer.json(`/api/series/${SLUG}/reanalyse`, 'POST', { version: 0 })).status).toBe(403);
    const tooNew = await lead.json(`/api/series/${SLUG}/reanalyse`, 'POST', { version: 1_000_000 });
    expect(tooNew.status).toBe(422);
    expect((await tooNew.json()).error.fields.version[0]).toMatch(/data version/);
    const redo = await lead.json(`/api/series/${SLUG}/reanalyse`, 'POST', { version: 0 });
    expect(redo.status).toBe(201);
    expect(((await redo.json()) as ReanalysisRecord).dataVersion).toBe(0);
  }, 120_000);

  it('the series page lists the versions and re-analyses on the version a lead picks', async () => {
    const overview: DataVersionsOverview = await (await lead.fetch(`/api/series/${SLUG}/data-versions`)).json();
    const reprocessing = overview.versions.find((v) => v.reason === 'offset of the logger corrected')!;
    const before = reprocessing.version - 1;
    await page.goto(`${app.baseUrl}/series/${SLUG}`);
    const panel = page.getByTestId('data-versions');
    await panel.locator('summary').click();
    await panel.getByTestId('data-version-table').getByText('offset of the logger corrected').waitFor();
    await panel.getByTestId('reanalyse-version').selectOption(String(before));
    await panel.getByTestId('reanalyse-button').click();
    await expect
      .poll(
        () =>
          panel
            .getByTestId('reanalysis')
            .filter({ hasText: `on version ${before},` })
            .count(),
        { timeout: 120_000, interval: 1000 },
      )
      .toBeGreaterThan(0);
    await panel.getByTestId('reanalysis-comparison').waitFor();
    await panel.screenshot({ path: path.join(SHOTS, 'data-versions.png') });
  }, 180_000);

  it('the Intake screen sends reprocessed data: tick, say why, commit (labels from components/intake/UploadPanel.tsx)', async () => {
    const created = await lead.json('/api/series', 'POST', {
      slug: 'reprocess-check',
      name: 'Reprocess check',
      intervalMs: 86_400_000,
      csvMapping: { timeColumn: 'time', valueColumn: 'value', timeFormat: 'iso8601' },
    });
    expect(created.status).toBe(201);
    const csvOf = (shift: number) =>
      `time,value\n${Array.from({ length: 10 }, (_, i) => `${new Date(Date.UTC(2025, 0, 1 + i)).toISOString()},${(10 + i + (i >= 5 ? shift : 0)).toFixed(2)}`).join('\n')}\n`;
    const raw = await lead.fetch('/api/series/reprocess-check/uploads', { method: 'POST', headers: { 'content-type': 'text/csv' }, body: csvOf(0) });
    expect(raw.status).toBe(200);
    await page.goto(`${app.baseUrl}/intake`);
    const panel = page.getByTestId('upload-panel');
    await panel.getByRole('combobox', { name: 'Series' }).fill('reprocess che');
    await panel.getByRole('option', { name: /Reprocess check/ }).click();
    await panel.locator('input[type="file"]').setInputFiles({ name: 'reprocessed-v2.csv', mimeType: 'text/csv', buffer: Buffer.from(csvOf(0.5)) });
    await panel.getByTestId('validation-summary').waitFor({ timeout: 30_000 });
    await panel.getByTestId('upload-reprocess').check();
    await panel.getByText('5 would replace stored values').waitFor({ timeout: 30_000 });
    const commit = panel.getByRole('button', { name: /^Commit 5 points/ });
    await expect(commit.isDisabled()).resolves.toBe(true);
    await panel.getByTestId('upload-reason').fill('second half re-derived from the corrected calibration');
    await commit.click();
    await expect.poll(() => panel.getByTestId('commit-outcome').textContent(), { timeout: 30_000 }).toMatch(/Run #\d+/);
    await panel.screenshot({ path: path.join(SHOTS, 'upload-reprocess.png') });
    const overview: DataVersionsOverview = await (await lead.fetch('/api/series/reprocess-check/data-versions')).json();
    expect(overview.versions[0]).toMatchObject({ version: 2, replaced: 5, reason: 'second half re-derived from the corrected calibration' });
  }, 120_000);
});
