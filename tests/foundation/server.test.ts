import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { Session, signedIn } from '../support/session';
import { databaseUrlFor, testDialect } from '../support/temp-db';

const ROLES = ['viewer', 'analyst', 'lead', 'admin'] as const;

describe('the started product', () => {
  let app: RunningApp;
  beforeAll(async () => {
    app = await startApp({ demo: false });
  });
  afterAll(async () => {
    await app?.stop();
  });

  test('health answers without sign-in and reports each part', async () => {
    const response = await fetch(`${app.baseUrl}/api/health`);
    expect(response.status).toBe(200);
    const body = await response.json();
    expect(body.ok).toBe(true);
    expect(body.db.ok).toBe(true);
    expect(body.db.dialect).toBe(testDialect());
    expect(body).toHaveProperty('scheduler');
    expect(body).toHaveProperty('mail');
    expect(response.headers.get('x-powered-by')).toBeNull();
  });

  test.each(ROLES)('the demo %s signs in through next-auth and the session carries the role', async (role) => {
    const session = await signedIn(app.baseUrl, `${role}@brinkwatch.test`, DEMO_PASSWORD);
    const me = await (await session.fetch('/api/auth/session')).json();
    expect(me.user.email).toBe(`${role}@brinkwatch.test`);
    expect(me.user.role).toBe(role);
  });

  test('a wrong password is refused and leaves no session', async () => {
    const session = new Session(app.baseUrl);
    const result = await session.signIn('analyst@brinkwatch.test', 'not-the-password');
    expect(result.ok).toBe(false);
    expect(result.error).toBe('CredentialsSignin');
    expect(await (await session.fetch('/api/auth/session')).json()).toEqual({});
  });

  test('an inactive user cannot sign in, and deactivation ends an existing session at once', async () => {
    const viewer = await signedIn(app.baseUrl, 'viewer@brinkwatch.test', DEMO_PASSWORD);
    expect((await viewer.fetch('/api/series')).status).toBe(200);
    const script = `
      const { db, User, closeDatabase } = await import('@/models');
      await db();
      await User.update({ active: false }, { where: { email: 'viewer@brinkwatch.test' } });
      await closeDatabase();`;
    await runInApp(app, script);
    const refused = await viewer.fetch('/api/series');
    expect(refused.status).toBe(401);
    expect((await refused.json()).error.code).toBe('unauthenticated');
    const again = await new Session(app.baseUrl).signIn('viewer@brinkwatch.test', DEMO_PASSWORD);
    expect(again.ok).toBe(false);
  });

  test('a password change ends every session opened with the old password', async () => {
    const first = await signedIn(app.baseUrl, 'analyst@brinkwatch.test', DEMO_PASSWORD);
    const second = await signedIn(app.baseUrl, 'analyst@brinkwatch.test', DEMO_PASSWORD);
    const changed = await first.json('/api/account', 'POST', { currentPassword: DEMO_PASSWORD, newPassword: 'a-new-password-456' });
    expect(changed.status).toBeLessThan(300);
    expect((await second.fetch('/api/series')).status).toBe(401);
    expect((await first.fetch('/api/series')).status).toBe(401);
    expect((await new Session(app.baseUrl).signIn('analyst@brinkwatch.test', DEMO_PASSWORD)).ok).toBe(false);
    const fresh = await signedIn(app.baseUrl, 'analyst@brinkwatch.test', 'a-new-password-456');
    expect((await fresh.fetch('/api/series')).status).toBe(200);
    const restored = await fresh.json('/api/account', 'POST', { currentPassword: 'a-new-password-456', newPassword: DEMO_PASSWORD });
    expect(restored.status).toBeLessThan(300);
  });

  test('signed out is 401, a role too low is 403, both with the JSON error body', async () => {
    const anonymous = new Session(app.baseUrl);
    const signedOut = await anonymous.fetch('/api/series');
    expect(signedOut.status).toBe(401);
    expect(await signedOut.json()).toEqual({ error: { code: 'unauthenticated', message: expect.any(String) } });

    const analyst = await signedIn(app.baseUrl, 'analyst@brinkwatch.test', DEMO_PASSWORD);
    const tooLow = await analyst.json('/api/series', 'POST', { slug: 'not-allowed', name: 'Not allowed' });
    expect(tooLow.status).toBe(403);
    const body = await tooLow.json();
    expect(body.error.code).toBe('forbidden');
    expect(JSON.stringify(body)).not.toMatch(/at \w+ \(|\.ts:\d+/); // never a stack trace
  });

  test('a lead creates a series with only slug and name; duplicates are 409, bad fields 422', async () => {
    const lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    const created = await lead.json('/api/series', 'POST', { slug: 'east-inlet-level', name: 'East inlet level' });
    expect(created.status).toBe(201);
    const record = await created.json();
    expect(record.csvMapping).toEqual({ timeColumn: 0, valueColumn: 1, timeFormat: 'iso8601' });
    expect(record.settings.window).toBe(0.5);
    expect((await lead.json('/api/series', 'POST', { slug: 'east-inlet-level', name: 'Again' })).status).toBe(409);
    const invalid = await lead.json('/api/series', 'POST', { slug: '../etc', name: '' });
    expect(invalid.status).toBe(422);
    const fields = (await invalid.json()).error.fields;
    expect(Object.keys(fields).sort()).toEqual(['name', 'slug']);
    const list = await (await lead.fetch('/api/series')).json();
    expect(list.items.map((s: { slug: string }) => s.slug)).toContain('east-inlet-level');
  });

  test('pages send signed-out visitors to the sign-in page', async () => {
    const response = await fetch(`${app.baseUrl}/alerts`, { redirect: 'manual' });
    expect([302, 307, 308]).toContain(response.status);
    expect(response.headers.get('location')).toContain('/signin');
  });

  test('a restart keeps every row and the signing secret, and seeds nothing twice', async () => {
    const lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    const before = await (await lead.fetch('/api/series')).json();
    const secret = fs.readFileSync(path.join(app.dataDir, 'auth-secret'), 'utf8');
    await app.stop();
    app = await startApp({ demo: false, dataDir: app.dataDir });
    expect(fs.readFileSync(path.join(app.dataDir, 'auth-secret'), 'utf8')).toBe(secret);
    const sameCookie = new Session(app.baseUrl).adoptCookies(lead);
    const after = await sameCookie.fetch('/api/series');
    expect(after.status).toBe(200); // the session survived the restart
    expect((await after.json()).items).toEqual(before.items);
    const count = await runInApp(
      app,
      `
      const { db, User, closeDatabase } = await import('@/models');
      await db();
      console.log(await User.count());
      await closeDatabase();`,
    );
    expect(count.trim()).toBe('4');
  }, 900_000); // the restart rebuilds first when sources changed since the first start
});

/** Runs a snippet against the app's database in a separate process (as an operator would with a script). */
async function runInApp(app: RunningApp, body: string): Promise<string> {
  const { spawnSync } = await import('node:child_process');
  const root = path.resolve(__dirname, '../..');
  fs.mkdirSync(path.join(root, '.tmp'), { recursive: true });
  const file = path.join(root, '.tmp', `snippet-${process.pid}-${Date.now()}.mts`);
  fs.writeFileSync(file, `${body}\n`);
  const result = spawnSync(process.execPath, ['--import', 'tsx', file], {
    cwd: root,
    env: { ...process.env, DATA_DIR: app.dataDir, DATABASE_PATH: '', DATABASE_URL: databaseUrlFor(app.dataDir) ?? '' },
    encoding: 'utf8',
  });
  fs.rmSync(file);
  if (result.status !== 0) throw new Error(result.stderr);
  return result.stdout;
}
