import fs from 'node:fs';
import path from 'node:path';
import { chromium, type Browser, type Page } from 'playwright-core';

/** Where browser tests save their screenshots and PDFs (git-ignored). */
export const SHOTS = path.resolve(__dirname, '../../test-results/screenshots');

/**
 * Debian's Chromium, never a downloaded browser, with the flags DEVELOPERS.md gives ("Browser tests"): without the
 * background-networking ones it tries hosts this machine's closed network refuses.
 */
export async function launchChromium(): Promise<Browser> {
  fs.mkdirSync(SHOTS, { recursive: true });
  return chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
    ],
  });
}

/** A full-page screenshot under SHOTS as `<name>.png`. */
export async function shot(page: Page, name: string): Promise<void> {
  await page.screenshot({ path: path.join(SHOTS, `${name}.png`), fullPage: true });
}

/** Signs a page in through the sign-in page as `email` and waits for the overview. */
export async function signInPage(page: Page, baseUrl: string, email: string, password: string): Promise<void> {
  await page.goto(`${baseUrl}/`);
  await page.waitForURL(/\/signin/);
  await page.getByLabel('E-mail').fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(`${baseUrl}/`);
}
