import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';

/** The directives of a Content-Security-Policy header, by name (CSP Level 3, https://www.w3.org/TR/CSP3/). */
function directives(header: string | null): Map<string, string[]> {
  const map = new Map<string, string[]>();
  for (const part of (header ?? '').split(';')) {
    const [name, ...values] = part.trim().split(/\s+/);
    if (name) map.set(name.toLowerCase(), values);
  }
  return map;
}

function nonceOf(policy: Map<string, string[]>): string {
  const source = (policy.get('script-src') ?? []).find((value) => value.startsWith("'nonce-"));
  expect(source, 'script-src carries a nonce').toBeDefined();
  return source!.slice("'nonce-".length, -1);
}

/** Every <script> element of a page with its attributes, inline or not. */
function scriptTags(html: string): { attributes: string; inline: boolean }[] {
  return [...html.matchAll(/<script\b([^>]*)>([\s\S]*?)<\/script>/gi)].map((m) => ({
    attributes: m[1],
    inline: m[2].trim().length > 0,
  }));
}

// Headers named by the OWASP Secure Headers Project (common practice): a version in `Server` or `X-Powered-By`
// tells an attacker which exploits to try.
function expectNoVersionHeaders(response: Response): void {
  expect(response.headers.get('x-powered-by')).toBeNull();
  expect(response.headers.get('server') ?? '').not.toMatch(/\d/);
}

describe('security headers of the started product', () => {
  let app: RunningApp;
  let viewer: Session;
  beforeAll(async () => {
    app = await startApp({ demo: false, scheduler: false });
    viewer = await signedIn(app.baseUrl, 'viewer@brinkwatch.test', DEMO_PASSWORD);
  });
  afterAll(async () => {
    await app?.stop();
  });

  test.each(['/signin', '/', '/alerts'])('page %s: CSP with a fresh nonce, no inline script without it, no framing', async (path) => {
    const first = await viewer.fetch(path);
    expect(first.status).toBeLessThan(500);
    const html = await first.text();
    const policy = directives(first.headers.get('content-security-policy'));
    const scriptSrc = policy.get('script-src') ?? [];
    expect(scriptSrc).not.toContain("'unsafe-inline'");
    expect(scriptSrc).not.toContain("'unsafe-eval'");
    expect(policy.get('frame-ancestors')).toEqual(["'none'"]);
    expect(policy.get('object-src')).toEqual(["'none'"]);
    expect(policy.get('base-uri')).toEqual(["'self'"]);
    const nonce = nonceOf(policy);
    // 128 bits or more of randomness per response (CSP3 §7.2 asks for at least 128 bits).
    expect(Buffer.from(nonce, 'base64').length).toBeGreaterThanOrEqual(16);

    // Every script the framework emits carries the nonce, so the policy does not break the page.
    const tags = scriptTags(html);
    expect(tags.length).toBeGreaterThan(0);
    for (const tag of tags) expect(tag.attributes).toContain(`nonce="${nonce}"`);

    const second = await viewer.fetch(path);
    await second.text();
    expect(nonceOf(directives(second.headers.get('content-security-policy')))).not.toBe(nonce);

    expect(first.headers.get('x-frame-options')).toBe('DENY');
    expect(first.headers.get('x-content-type-options')).toBe('nosniff');
    expectNoVersionHeaders(first);
  });

  test.each([
    ['/api/health', 200],
    ['/api/series', 200],
    ['/api/series/no-such-series/settings-history', 404],
  ])('API answer %s carries its own locked-down CSP and no version header', async (path, status) => {
    const response = await viewer.fetch(path);
    expect(response.status).toBe(status);
    expect(response.headers.get('content-type')).toMatch(/^application\/json/);
    const policy = directives(response.headers.get('content-security-policy'));
    expect(policy.get('default-src')).toEqual(["'none'"]);
    expect(policy.get('frame-ancestors')).toEqual(["'none'"]);
    expect(response.headers.get('x-content-type-options')).toBe('nosniff');
    expectNoVersionHeaders(response);
  });

  test('a signed-out API call (401) and the sign-in redirect carry no version header either', async () => {
    const denied = await fetch(`${app.baseUrl}/api/series`);
    expect(denied.status).toBe(401);
    expect(directives(denied.headers.get('content-security-policy')).get('frame-ancestors')).toEqual(["'none'"]);
    expectNoVersionHeaders(denied);
    const redirect = await fetch(`${app.baseUrl}/alerts`, { redirect: 'manual' });
    expect([302, 307, 308]).toContain(redirect.status);
    expect(redirect.headers.get('x-frame-options')).toBe('DENY');
    expectNoVersionHeaders(redirect);
  });

  test('static assets are served without a version header', async () => {
    const html = await (await fetch(`${app.baseUrl}/signin`)).text();
    const asset = html.match(/\/_next\/static\/[^"']+\.js/)?.[0];
    expect(asset).toBeDefined();
    const response = await fetch(app.baseUrl + asset);
    expect(response.status).toBe(200);
    expectNoVersionHeaders(response);
  });
});
