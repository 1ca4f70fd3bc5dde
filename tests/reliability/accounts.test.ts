import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { Session, signedIn } from '../support/session';
import { RawDb } from './sqlite';
import { waitFor } from './scheduler';

const ACCOUNT_LIMIT = 3;
const ADDRESS_LIMIT = 6;

/** Parses a cookie header into its name, value and attributes (RFC 6265 §5.2). */
function parseSetCookie(header: string): { name: string; attributes: Map<string, string> } {
  const [pair, ...rest] = header.split(';');
  const attributes = new Map<string, string>();
  for (const part of rest) {
    const [key, ...value] = part.trim().split('=');
    attributes.set(key.toLowerCase(), value.join('='));
  }
  return { name: pair.slice(0, pair.indexOf('=')).trim(), attributes };
}

/** Signs in by hand and returns the raw Set-Cookie headers of the credentials callback. */
async function signInCookies(baseUrl: string, email: string, password: string): Promise<string[]> {
  const session = new Session(baseUrl);
  const csrf = await (await session.fetch('/api/auth/csrf')).json();
  const response = await session.fetch('/api/auth/callback/credentials', {
    method: 'POST',
    headers: { 'content-type': 'application/x-www-form-urlencoded' },
    body: new URLSearchParams({ csrfToken: csrf.csrfToken, email, password, json: 'true' }),
  });
  return response.headers.getSetCookie();
}

describe('accounts and sign-in', () => {
  let app: RunningApp;
  let https: RunningApp;
  beforeAll(async () => {
    [app, https] = await Promise.all([
      // The scheduler sends the reset mails each second; nothing else is scheduled.
      startApp({
        demo: false,
        env: {
          SIGNIN_MAX_FAILURES_ACCOUNT: String(ACCOUNT_LIMIT),
          SIGNIN_MAX_FAILURES_ADDRESS: String(ADDRESS_LIMIT),
          MAIL_CRON: '*/1 * * * * *',
          INGEST_CRON: '0 0 1 1 *',
          ANALYSIS_CRON: '0 0 1 1 *',
        },
      }),
      // Served behind a TLS-terminating proxy: the public URL is https, the app itself listens on loopback http.
      startApp({ demo: false, scheduler: false, env: { NEXTAUTH_URL: 'https://localhost:8443' } }),
    ]);
  });
  afterAll(async () => {
    await Promise.all([app?.stop(), https?.stop()]);
  });

  test('stored password hashes are bcrypt with a cost of at least 10', async () => {
    const raw = await RawDb.forDataDir(app.dataDir);
    const hashes = await raw.all<{ email: string; password_hash: string }>('SELECT email, password_hash FROM users');
    await raw.close();
    expect(hashes).toHaveLength(4);
    for (const { password_hash: hash } of hashes) {
      // Modular crypt format $2a$/$2b$/$2y$, two-digit cost, 53 characters of salt and hash (OpenBSD bcrypt(3)).
      const match = /^\$2[aby]\$(\d{2})\$[./A-Za-z0-9]{53}$/.exec(hash);
      expect(match, hash.slice(0, 7)).not.toBeNull();
      // OWASP Password Storage Cheat Sheet: a bcrypt work factor of 10 or more.
      expect(Number(match![1])).toBeGreaterThanOrEqual(10);
      expect(hash).not.toContain(DEMO_PASSWORD);
    }
  });

  test('an account is locked after repeated failures, with the same answer whether or not it exists', async () => {
    const address = { 'x-forwarded-for': '198.51.100.7' };
    const outcomes = async (email: string) => {
      const errors: (string | null)[] = [];
      for (let i = 0; i < ACCOUNT_LIMIT; i++) errors.push((await new Session(app.baseUrl).signIn(email, 'wrong-password-1', address)).error);
      return errors;
    };
    const real = await outcomes('analyst@brinkwatch.test');
    const ghost = await outcomes('nobody-here@brinkwatch.test');
    expect(real).toEqual(Array(ACCOUNT_LIMIT).fill('CredentialsSignin'));
    expect(ghost).toEqual(real);

    // Now even the right password is refused for the locked account, and the unknown one answers identically.
    const lockedReal = await new Session(app.baseUrl).signIn('analyst@brinkwatch.test', DEMO_PASSWORD, address);
    const lockedGhost = await new Session(app.baseUrl).signIn('nobody-here@brinkwatch.test', DEMO_PASSWORD, address);
    expect(lockedReal).toEqual({ ok: false, error: 'Locked' });
    expect(lockedGhost).toEqual(lockedReal);
    // From another address too: the account lock is per account.
    expect((await new Session(app.baseUrl).signIn('analyst@brinkwatch.test', DEMO_PASSWORD, { 'x-forwarded-for': '198.51.100.8' })).error).toBe('Locked');

    // The page says so plainly, in words that fit an unknown account as well as a real one.
    const page = await (await fetch(`${app.baseUrl}/signin?error=Locked`)).text();
    expect(page).toMatch(/too many failed attempts/i);

    // Other accounts are untouched (from an address with no failures: this one has reached its own limit).
    expect((await new Session(app.baseUrl).signIn('lead@brinkwatch.test', DEMO_PASSWORD, { 'x-forwarded-for': '198.51.100.20' })).ok).toBe(true);
  });

  test('one address is locked after failures across many accounts, even when it forges X-Forwarded-For entries', async () => {
    // A reverse proxy appends the peer address as the last entry; what the client put before it is forgeable.
    for (let i = 0; i < ADDRESS_LIMIT; i++) {
      const result = await new Session(app.baseUrl).signIn(`spray-${i}@brinkwatch.test`, 'wrong-password-1', {
        'x-forwarded-for': `10.66.0.${i}, 203.0.113.9`,
      });
      expect(result.error).toBe('CredentialsSignin');
    }
    const fromSprayer = await new Session(app.baseUrl).signIn('viewer@brinkwatch.test', DEMO_PASSWORD, {
      'x-forwarded-for': '10.66.0.99, 203.0.113.9',
    });
    expect(fromSprayer).toEqual({ ok: false, error: 'Locked' });
    const fromElsewhere = await new Session(app.baseUrl).signIn('viewer@brinkwatch.test', DEMO_PASSWORD, {
      'x-forwarded-for': '203.0.113.10',
    });
    expect(fromElsewhere.ok).toBe(true);
  });

  test('the session cookie is httpOnly and SameSite=Lax over http, and not Secure there', async () => {
    const cookies = (await signInCookies(app.baseUrl, 'admin@brinkwatch.test', DEMO_PASSWORD)).map(parseSetCookie);
    const session = cookies.find((c) => c.name === 'next-auth.session-token');
    expect(session).toBeDefined();
    expect(session!.attributes.has('httponly')).toBe(true);
    expect(session!.attributes.get('samesite')?.toLowerCase()).toBe('lax');
    expect(session!.attributes.has('secure')).toBe(false);
  });

  test('served over https, the session cookie is Secure, httpOnly, SameSite and __Secure- prefixed', async () => {
    const cookies = (await signInCookies(https.baseUrl, 'admin@brinkwatch.test', DEMO_PASSWORD)).map(parseSetCookie);
    // RFC 6265bis §4.1.3.1: a __Secure- cookie must carry Secure, so browsers refuse it over plain http.
    const session = cookies.find((c) => c.name === '__Secure-next-auth.session-token');
    expect(session, cookies.map((c) => c.name).join(', ')).toBeDefined();
    expect(session!.attributes.has('secure')).toBe(true);
    expect(session!.attributes.has('httponly')).toBe(true);
    expect(session!.attributes.get('samesite')?.toLowerCase()).toBe('lax');
    for (const cookie of cookies) expect(cookie.attributes.has('secure'), cookie.name).toBe(true);
  });

  /** Asks for a reset link for `email` and reads it from the local mail sink. */
  async function resetLink(email: string): Promise<string> {
    expect((await new Session(app.baseUrl).json('/api/auth/reset-request', 'POST', { email })).status).toBe(202);
    const dir = path.join(app.dataDir, 'mailbox');
    return waitFor(
      `the reset mail to ${email}`,
      async () => {
        if (!fs.existsSync(dir)) return null;
        for (const file of fs.readdirSync(dir).filter((f) => f.endsWith('.eml'))) {
          const raw = fs.readFileSync(path.join(dir, file), 'utf8').replace(/=\r?\n/g, '');
          if (raw.includes(email)) return /\/reset\/([A-Za-z0-9_-]{20,})/.exec(raw)?.[1] ?? null;
        }
        return null;
      },
      30_000,
    );
  }

  test('a reset link works once, and the old password stops working', async () => {
    const token = await resetLink('admin@brinkwatch.test');
    const reset = (password: string) => new Session(app.baseUrl).json(`/api/password-resets/${token}`, 'POST', { password });
    expect((await reset('first new passphrase')).status).toBe(200);
    const reused = await reset('second new passphrase');
    expect(reused.status).toBeGreaterThanOrEqual(400);
    expect(reused.status).toBeLessThan(500);
    expect((await new Session(app.baseUrl).signIn('admin@brinkwatch.test', DEMO_PASSWORD)).ok).toBe(false);
    expect((await new Session(app.baseUrl).signIn('admin@brinkwatch.test', 'second new passphrase')).ok).toBe(false);
    expect((await new Session(app.baseUrl).signIn('admin@brinkwatch.test', 'first new passphrase')).ok).toBe(true);
  });

  test('an expired reset link is refused and changes nothing', async () => {
    const token = await resetLink('lead@brinkwatch.test');
    const raw = await RawDb.forDataDir(app.dataDir);
    await raw.exec("UPDATE user_tokens SET expires_at = '2000-01-01 00:00:00.000 +00:00' WHERE purpose = 'reset' AND used_at IS NULL");
    const hash = await raw.get("SELECT password_hash FROM users WHERE email = 'lead@brinkwatch.test'");
    const refused = await new Session(app.baseUrl).json(`/api/password-resets/${token}`, 'POST', { password: 'a late passphrase' });
    expect(refused.status).toBeGreaterThanOrEqual(400);
    expect(refused.status).toBeLessThan(500);
    expect(await raw.get("SELECT password_hash FROM users WHERE email = 'lead@brinkwatch.test'")).toEqual(hash);
    await raw.close();
    expect((await new Session(app.baseUrl).signIn('lead@brinkwatch.test', DEMO_PASSWORD, { 'x-forwarded-for': '198.51.100.30' })).ok).toBe(true);
  });

  test('deactivating a user by an admin ends API and page access at once', async () => {
    const viewer = await signedIn(app.baseUrl, 'viewer@brinkwatch.test', DEMO_PASSWORD);
    expect((await viewer.fetch('/')).status).toBe(200);
    const admin = await signedIn(app.baseUrl, 'admin@brinkwatch.test', 'first new passphrase');
    const users = (await (await admin.fetch('/api/users')).json()).items as { id: number; email: string }[];
    const id = users.find((u) => u.email === 'viewer@brinkwatch.test')!.id;
    expect((await admin.json(`/api/users/${id}`, 'PATCH', { active: false })).status).toBe(200);
    expect((await viewer.fetch('/api/series')).status).toBe(401);
    const page = await viewer.fetch('/alerts');
    expect([302, 303, 307, 308]).toContain(page.status);
    expect(page.headers.get('location')).toContain('/signin');
  });
});
