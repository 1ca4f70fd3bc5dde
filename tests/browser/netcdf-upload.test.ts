import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Browser } from 'playwright-core';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { launchChromium, shot, signInPage } from '../support/browser';

const FIXTURES = path.resolve(__dirname, '../../fixtures/netcdf');

let app: RunningApp;
let browser: Browser;
let lead: Session;

beforeAll(async () => {
  app = await startApp();
  browser = await launchChromium();
  lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
  expect((await lead.json('/api/series', 'POST', { slug: 'browser-netcdf', name: 'Browser netCDF check' })).status).toBe(201);
});

afterAll(async () => {
  await browser?.close();
  await app?.stop();
});

describe('uploading a netCDF file on the Intake screen', () => {
  it('offers the variables of a file with several, previews the chosen one and commits it', async () => {
    const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
    const page = await context.newPage();
    await signInPage(page, app.baseUrl, 'lead');
    await page.goto(`${app.baseUrl}/intake`);
    const panel = page.getByTestId('upload-panel');
    await panel.getByRole('combobox', { name: 'Series' }).fill('browser netcdf');
    await panel.getByRole('option', { name: /Browser netCDF check/ }).click();
    await panel
      .locator('input[type="file"]')
      .setInputFiles({ name: 'pier.nc', mimeType: 'application/x-netcdf', buffer: fs.readFileSync(path.join(FIXTURES, 'good-classic.nc')) });
    // temp and sal are both on the time dimension: the form asks which one, and says why.
    await expect.poll(() => panel.getByTestId('file-error').textContent(), { timeout: 30_000 }).toContain('several data variables');
    await panel.getByTestId('netcdf-variable').selectOption('sal');
    await panel.getByTestId('validation-summary').waitFor({ timeout: 30_000 });
    await expect.poll(() => panel.getByTestId('netcdf-detected').textContent()).toContain('days since 1950-01-01');
    await panel.getByRole('button', { name: /^Commit 5 points/ }).click();
    await expect.poll(() => panel.getByTestId('commit-outcome').textContent(), { timeout: 30_000 }).toMatch(/Run #\d+/);
    await shot(page, 'intake-upload-netcdf');
    await context.close();
    const stored = await (await lead.fetch('/api/series/browser-netcdf/observations')).json();
    // fixtures/netcdf/expected.json ("classic packed sal"): six readings, one missing.
    expect(stored.items.map((item: { value: number }) => item.value)).toEqual([35.1, 35.2, 35.3, 34.55, 35.5]);
  });
});
