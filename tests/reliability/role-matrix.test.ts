import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { ROLES, roleAtLeast, type Role } from '@/lib/auth/roles';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { Session, signedIn } from '../support/session';

const ROOT = path.resolve(__dirname, '../..');
const METHODS = ['GET', 'POST', 'PUT', 'PATCH', 'DELETE'] as const;

/**
 * Who may call what: route pattern + method → the lowest role that may, 'public' (no sign-in: health, sign-in
 * itself, the links sent by e-mail, whose secret is the token in the path) or 'token' (an ingest token of the
 * series, or a signed-in lead). A route or method found in app/api without a row here fails the test.
 */
const EXPECTED: Record<string, Role | 'public' | 'token'> = {
  'GET /api/health': 'public',
  'GET /api/auth/[...nextauth]': 'public',
  'POST /api/auth/[...nextauth]': 'public',
  'POST /api/auth/reset-request': 'public',
  'POST /api/invitations/[token]/accept': 'public',
  'POST /api/password-resets/[token]': 'public',
  'POST /api/reports/unsubscribe/[token]': 'public',
  'GET /api/reports/period': 'viewer',
  'GET /api/reports/schedules': 'lead',
  'POST /api/reports/schedules': 'lead',
  'PATCH /api/reports/schedules/[id]': 'lead',
  'DELETE /api/reports/schedules/[id]': 'lead',

  'GET /api/account': 'viewer',
  'PATCH /api/account': 'viewer',
  'POST /api/account': 'viewer',
  'GET /api/watches': 'viewer',
  'PUT /api/series/[slug]/watch': 'viewer',

  'GET /api/series': 'viewer',
  'POST /api/series': 'lead',
  'GET /api/series/[slug]': 'viewer',
  'PATCH /api/series/[slug]': 'lead',
  'POST /api/series/bulk': 'lead',
  'GET /api/sites': 'viewer',
  'POST /api/sites': 'lead',
  'GET /api/sites/[slug]': 'viewer',
  'PATCH /api/sites/[slug]': 'lead',
  'GET /api/sites/[slug]/analysis': 'viewer',
  'GET /api/sites/[slug]/rules': 'viewer',
  'POST /api/sites/[slug]/rules': 'lead',
  'GET /api/series/[slug]/observations': 'viewer',
  'POST /api/series/[slug]/observations': 'token',
  'POST /api/series/[slug]/observations/flags': 'analyst',
  'GET /api/series/[slug]/observations/flags': 'viewer',
  'GET /api/series/[slug]/observations/versions': 'viewer',
  'POST /api/series/[slug]/qc/rerun': 'lead',
  'GET /api/series/[slug]/data-versions': 'viewer',
  'POST /api/series/[slug]/reanalyse': 'lead',
  'GET /api/feeds': 'viewer',
  'POST /api/feeds': 'lead',
  'POST /api/feeds/[slug]/uploads': 'lead',
  'POST /api/sites/[slug]/maintenance': 'lead',
  'POST /api/series/[slug]/uploads': 'lead',
  'POST /api/series/[slug]/uploads/preview': 'lead',
  'GET /api/series/[slug]/settings-history': 'viewer',
  'GET /api/series/[slug]/indicators': 'viewer',
  'POST /api/series/[slug]/indicators': 'analyst',
  'POST /api/series/[slug]/analysis/preview': 'analyst',
  'GET /api/series/[slug]/rules': 'viewer',
  'POST /api/series/[slug]/rules': 'lead',
  'GET /api/series/[slug]/marks': 'viewer',
  'GET /api/account/tokens': 'viewer',
  'POST /api/account/tokens': 'viewer',
  'DELETE /api/account/tokens/[id]': 'viewer',
  'GET /api/snapshots/[id]/data.csv': 'viewer',
  'GET /api/site-snapshots/[id]/data.csv': 'viewer',
  'POST /api/series/[slug]/marks': 'lead',
  'DELETE /api/marks/[id]': 'lead',
  'POST /api/series/[slug]/rules/preview': 'analyst',
  'GET /api/series/[slug]/watchers': 'lead',
  'PUT /api/series/[slug]/watchers': 'lead',
  'GET /api/account/preferences': 'viewer',
  'PUT /api/account/preferences': 'viewer',
  'GET /api/series/[slug]/transitions': 'viewer',
  'POST /api/series/[slug]/transitions': 'lead',
  'DELETE /api/transitions/[id]': 'lead',
  'GET /api/series/[slug]/tokens': 'admin',
  'POST /api/series/[slug]/tokens': 'admin',
  'DELETE /api/tokens/[id]': 'admin',
  'GET /api/drop-folders': 'viewer',
  'GET /api/ingest-runs': 'viewer',
  'GET /api/ingest-runs/[id]': 'viewer',

  'GET /api/alerts': 'viewer',
  'GET /api/alerts/[id]': 'viewer',
  'POST /api/alerts/[id]/actions': 'analyst',
  'POST /api/alerts/[id]/transitions': 'analyst',
  'POST /api/alerts/[id]/notes': 'analyst',
  'PATCH /api/notes/[id]': 'analyst',

  'GET /api/rules/defaults': 'viewer',
  'POST /api/rules/defaults': 'lead',
  'PATCH /api/rules/[id]': 'lead',
  'DELETE /api/rules/[id]': 'lead',
  'POST /api/rules/[id]/threshold': 'lead',
  'POST /api/rules/[id]/backtest': 'lead',
  'GET /api/backtests': 'viewer',
  'GET /api/backtests/[id]': 'viewer',
  'POST /api/backtests/[id]/cancel': 'lead',

  'GET /api/users': 'admin',
  'POST /api/users': 'admin',
  'PATCH /api/users/[id]': 'admin',
  'GET /api/audit': 'admin',
  'GET /api/admin/outbox': 'admin',
  'POST /api/admin/outbox/[id]/retry': 'admin',
  'GET /api/admin/mailbox': 'admin',
  'GET /api/webhooks': 'admin',
  'POST /api/webhooks': 'admin',
  'PATCH /api/webhooks/[id]': 'admin',
  'DELETE /api/webhooks/[id]': 'admin',
  'GET /api/webhooks/[id]/deliveries': 'admin',
  'POST /api/webhooks/[id]/deliveries/[deliveryId]/retry': 'admin',
};

/** Server actions ('use server' exports), keyed `file#export`, with the lowest role that may call them. */
const EXPECTED_ACTIONS: Record<string, Role> = {};

interface Endpoint {
  key: string;
  method: (typeof METHODS)[number];
  pattern: string;
}

/** Every app/api/**\/route.ts and the HTTP methods it exports, read from the source as Next.js reads the exports. */
function discoverRoutes(): Endpoint[] {
  const found: Endpoint[] = [];
  const walk = (dir: string) => {
    for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
      const full = path.join(dir, entry.name);
      if (entry.isDirectory()) walk(full);
      else if (/^route\.(ts|tsx|js|mjs)$/.test(entry.name)) {
        const source = fs.readFileSync(full, 'utf8');
        const pattern =
          '/' +
          path
            .relative(path.join(ROOT, 'app'), dir)
            .split(path.sep)
            .filter((s) => !/^\(.*\)$/.test(s))
            .join('/');
        const methods = new Set<string>();
        for (const m of source.matchAll(/export\s+(?:const|let|async\s+function|function)\s+([A-Z]+)\b/g)) methods.add(m[1]);
        for (const block of source.matchAll(/export\s*\{([^}]*)\}/g)) {
          for (const m of block[1].matchAll(/(?:\w+\s+as\s+)?\b([A-Z]+)\b/g)) methods.add(m[1]);
        }
        for (const method of methods) {
          if (!(METHODS as readonly string[]).includes(method)) continue;
          found.push({ key: `${method} ${pattern}`, method: method as Endpoint['method'], pattern });
        }
      }
    }
  };
  walk(path.join(ROOT, 'app/api'));
  return found.sort((a, b) => a.key.localeCompare(b.key));
}

/** Exported functions of every file that starts with the 'use server' directive. */
function discoverActions(): { key: string; source: string; name: string }[] {
  const found: { key: string; source: string; name: string }[] = [];
  const walk = (dir: string) => {
    for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
      const full = path.join(dir, entry.name);
      if (entry.isDirectory()) walk(full);
      else if (/\.(ts|tsx)$/.test(entry.name)) {
        const source = fs.readFileSync(full, 'utf8');
        if (!/^\s*(?:\/\/[^\n]*\n|\/\*[\s\S]*?\*\/\s*)*['"]use server['"]/.test(source)) continue;
        for (const m of source.matchAll(/export\s+(?:async\s+)?function\s+(\w+)|export\s+const\s+(\w+)\s*=/g)) {
          const name = m[1] ?? m[2];
          found.push({ key: `${path.relative(ROOT, full)}#${name}`, source, name });
        }
      }
    }
  };
  for (const dir of ['app', 'components', 'lib']) walk(path.join(ROOT, dir));
  return found;
}

const routes = discoverRoutes();

describe('every route and server action has an expected minimum role', () => {
  test('the file tree and the table agree', () => {
    expect(routes.length).toBeGreaterThan(20);
    const missing = routes.map((r) => r.key).filter((key) => !(key in EXPECTED));
    expect(missing, 'add these to EXPECTED in tests/reliability/role-matrix.test.ts').toEqual([]);
    const stale = Object.keys(EXPECTED).filter((key) => !routes.some((r) => r.key === key));
    expect(stale, 'these rows name routes that no longer exist').toEqual([]);
  });

  test('server actions: each has a row and calls requireRole with that role first', () => {
    const actions = discoverActions();
    expect(actions.map((a) => a.key).filter((key) => !(key in EXPECTED_ACTIONS))).toEqual([]);
    for (const action of actions) {
      const body = action.source.slice(action.source.indexOf(action.name));
      const first = /\{\s*(?:const\s+\w+\s*=\s*)?await\s+requireRole\(\s*'(\w+)'\s*\)/.exec(body);
      expect(first?.[1], `${action.key} must call requireRole first`).toBe(EXPECTED_ACTIONS[action.key]);
    }
  });
});

describe('the role matrix on the started product', () => {
  let app: RunningApp;
  const sessions = new Map<Role | 'signed-out', Session>();
  let slug: string;
  let otherSlug: string;
  let token: string;

  /** A concrete URL for a pattern: the demo series, an id and a token that exist nowhere. */
  const urlFor = (pattern: string, seriesSlug = slug) =>
    pattern
      .replace('[slug]', seriesSlug)
      .replace('[...nextauth]', 'session')
      .replace(/\[token\]/g, 'no-such-token-0000000000')
      .replace(/\[id\]/g, '987654321');

  const call = (session: Session, endpoint: Endpoint, headers: Record<string, string> = {}, seriesSlug?: string) => {
    const withBody = endpoint.method !== 'GET' && endpoint.method !== 'DELETE';
    return session.fetch(urlFor(endpoint.pattern, seriesSlug), {
      method: endpoint.method,
      headers: { ...(withBody ? { 'content-type': 'application/json' } : {}), ...headers },
      body: withBody ? '{}' : undefined,
    });
  };

  beforeAll(async () => {
    app = await startApp({ demo: true, scheduler: false });
    sessions.set('signed-out', new Session(app.baseUrl));
    for (const role of ROLES) sessions.set(role, await signedIn(app.baseUrl, `${role}@brinkwatch.test`, DEMO_PASSWORD));
    const list = await (await sessions.get('viewer')!.fetch('/api/series')).json();
    [slug, otherSlug] = list.items.map((s: { slug: string }) => s.slug);
    expect(otherSlug).toBeDefined();
    const issued = await sessions.get('admin')!.json(`/api/series/${slug}/tokens`, 'POST', { label: 'role matrix' });
    expect(issued.status).toBe(201);
    token = (await issued.json()).token;
  });
  afterAll(async () => {
    await app?.stop();
  });

  test.each(routes.map((r) => [r.key, r] as const))('%s', async (_key, endpoint) => {
    const minimum = EXPECTED[endpoint.key];
    expect(minimum, `no expectation for ${endpoint.key}`).toBeDefined();
    const outcome: Record<string, number> = {};
    for (const who of ['signed-out', ...ROLES] as const) {
      const response = await call(sessions.get(who)!, endpoint);
      await response.arrayBuffer();
      outcome[who] = response.status;
    }
    for (const [who, status] of Object.entries(outcome)) {
      const detail = `${endpoint.key} as ${who}: ${JSON.stringify(outcome)}`;
      expect(status, detail).toBeLessThan(500);
      if (minimum === 'public') {
        expect([401, 403], detail).not.toContain(status);
        continue;
      }
      // A push without a token is a signed-in lead's.
      const role: Role = minimum === 'token' ? 'lead' : minimum;
      if (who === 'signed-out') expect(status, detail).toBe(401);
      else if (!roleAtLeast(who as Role, role)) expect(status, detail).toBe(403);
      else expect([401, 403], detail).not.toContain(status);
    }
  });

  test('an ingest token reaches only the push route of its own series; everywhere else it is no session', async () => {
    const bearer = { authorization: `Bearer ${token}` };
    const anonymous = new Session(app.baseUrl);
    const push = routes.find((r) => EXPECTED[r.key] === 'token')!;
    const own = await anonymous.fetch(urlFor(push.pattern), {
      method: 'POST',
      headers: { ...bearer, 'content-type': 'text/csv' },
      body: 'time,value\n',
    });
    expect([401, 403]).not.toContain(own.status);
    const other = await call(anonymous, push, bearer, otherSlug);
    expect(other.status).toBe(403);
    expect((await other.json()).error.code).toBe('forbidden');

    const refused: string[] = [];
    for (const endpoint of routes) {
      const expectation = EXPECTED[endpoint.key];
      if (expectation === 'public' || expectation === 'token') continue;
      const response = await call(anonymous, endpoint, bearer);
      await response.arrayBuffer();
      if (response.status !== 401) refused.push(`${endpoint.key} answered ${response.status}`);
    }
    expect(refused).toEqual([]);
  });
});
