import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { Session, signedIn } from '../support/session';

// Personal API tokens on the started product: a script with nothing but HTTP and a bearer token (RFC 6750 §2.1)
// reads what its owner may read, writes only where the token's role allows, and a revoked token is refused at once.
const SLUG = 'veskary-salinity-contrast';
let app: RunningApp;
let lead: Session;
let viewer: Session;

const bearer = (token: string) => ({ authorization: `Bearer ${token}` });
async function issue(
  who: Session,
  body: object,
): Promise<{ status: number; token?: string; id?: number; role?: string; error?: { fields?: Record<string, string[]> } }> {
  const response = await who.json('/api/account/tokens', 'POST', body);
  return { status: response.status, ...(await response.json()) };
}

describe('personal API tokens (real server)', () => {
  beforeAll(async () => {
    app = await startApp({ demo: true, scheduler: false });
    lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    viewer = await signedIn(app.baseUrl, 'viewer@brinkwatch.test', DEMO_PASSWORD);
  }, 600_000);
  afterAll(async () => {
    await app?.stop();
  });

  it('a script reads series, indicators and alerts with a viewer token, and cannot write', async () => {
    const made = await issue(viewer, { name: 'weekly R report' });
    expect(made.status).toBe(201);
    expect(made.token).toMatch(/^bwp_[A-Za-z0-9_-]{43}$/);
    expect(made.role).toBe('viewer');
    const script = new Session(app.baseUrl); // no cookies: only the token speaks
    const series = await script.fetch('/api/series', { headers: bearer(made.token!) });
    expect(series.status).toBe(200);
    expect(JSON.stringify(await series.json())).toContain(SLUG);
    const csv = await script.fetch(`/api/series/${SLUG}/indicators?format=csv`, { headers: bearer(made.token!) });
    expect(csv.status).toBe(200);
    expect(csv.headers.get('content-type')).toMatch(/^text\/csv/);
    expect((await script.fetch('/api/alerts', { headers: bearer(made.token!) })).status).toBe(200);
    const write = await script.fetch(`/api/series/${SLUG}/marks`, {
      method: 'POST',
      headers: { ...bearer(made.token!), 'content-type': 'application/json' },
      body: JSON.stringify({ at: '2020-01-01' }),
    });
    expect(write.status).toBe(403);

    const listed = await (await viewer.fetch('/api/account/tokens')).json();
    const mine = listed.tokens.find((t: { id: number }) => t.id === made.id);
    expect(mine).toMatchObject({ name: 'weekly R report', role: 'viewer', revokedAt: null });
    expect(mine.lastUsedAt).not.toBeNull();
    expect(JSON.stringify(listed)).not.toContain(made.token);
  });

  it('acts with the lower of its role and its owner\u2019s: a lead\u2019s viewer token cannot write, a lead token can', async () => {
    const reader = await issue(lead, { name: 'dashboard', role: 'viewer' });
    const writer = await issue(lead, { name: 'loader', role: 'lead' });
    const post = (token: string) =>
      new Session(app.baseUrl).fetch(`/api/series/${SLUG}/marks`, {
        method: 'POST',
        headers: { ...bearer(token), 'content-type': 'application/json' },
        body: JSON.stringify({ at: '2019-06-01', kind: 'maintenance', note: 'scripted' }),
      });
    expect((await post(reader.token!)).status).toBe(403);
    expect((await post(writer.token!)).status).toBe(201);
    const above = await issue(viewer, { name: 'too high', role: 'lead' });
    expect(above.status).toBe(422);
    expect(above.error?.fields?.role?.length).toBeGreaterThan(0);
  });

  it('a revoked token is refused at once; only its owner can revoke it; a push token reads nothing', async () => {
    const made = await issue(viewer, { name: 'short-lived' });
    const script = new Session(app.baseUrl);
    expect((await script.fetch('/api/series', { headers: bearer(made.token!) })).status).toBe(200);
    expect((await lead.fetch(`/api/account/tokens/${made.id}`, { method: 'DELETE' })).status).toBe(404);
    const revoked = await viewer.fetch(`/api/account/tokens/${made.id}`, { method: 'DELETE' });
    expect(revoked.status).toBe(200);
    expect((await revoked.json()).revokedAt).not.toBeNull();
    expect((await script.fetch('/api/series', { headers: bearer(made.token!) })).status).toBe(401);
    expect((await script.fetch('/api/series', { headers: bearer('bwp_not-a-token') })).status).toBe(401);

    const admin = await signedIn(app.baseUrl, 'admin@brinkwatch.test', DEMO_PASSWORD);
    const audit = await (await admin.fetch('/api/audit?entity=api-token&pageSize=200')).json();
    const actions = JSON.stringify(audit);
    expect(actions).toContain('api-token.issue');
    expect(actions).toContain('api-token.revoke');
    expect(actions).not.toContain(made.token);
  });
});
