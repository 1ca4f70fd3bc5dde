import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';

let app: RunningApp;
let lead: Session;
let viewer: Session;

beforeAll(async () => {
  app = await startApp({ demo: true, scheduler: false });
  lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
  viewer = await signedIn(app.baseUrl, 'viewer@brinkwatch.test', DEMO_PASSWORD);
});
afterAll(async () => {
  await app?.stop();
});

describe('sites through the API', () => {
  it("turns the demo series' site names into sites, each with its series", async () => {
    const { items } = await (await viewer.fetch('/api/sites')).json();
    expect(items.length).toBeGreaterThan(1);
    expect(items.every((site: { seriesCount: number }) => site.seriesCount > 0)).toBe(true);
    const page = await (await viewer.fetch(`/api/sites/${items[0].slug}`)).json();
    expect(page.series.length).toBe(items[0].seriesCount);
    expect(page.series.every((row: { site: string }) => row.site === items[0].name)).toBe(true);
  });

  it('lets a lead add and edit a site and register a series under it; a viewer reads only', async () => {
    const site = { slug: 'api-fjord', name: 'API fjord', latitude: 60.39, longitude: 5.32, timeZone: 'Europe/Oslo' };
    expect((await viewer.json('/api/sites', 'POST', site)).status).toBe(403);
    const created = await lead.json('/api/sites', 'POST', site);
    expect(created.status).toBe(201);
    const { id } = await created.json();
    expect((await lead.json('/api/sites', 'POST', site)).status).toBe(409);
    const invalid = await lead.json('/api/sites', 'POST', { slug: 'half', name: 'Half', latitude: 10 });
    expect(invalid.status).toBe(422);
    expect((await invalid.json()).error.fields.longitude).toBeDefined();
    expect((await viewer.json('/api/sites/api-fjord', 'PATCH', { notes: 'x' })).status).toBe(403);
    const patched = await lead.json('/api/sites/api-fjord', 'PATCH', { notes: 'Boat from the north quay.' });
    expect(await patched.json()).toMatchObject({ notes: 'Boat from the north quay.', seriesCount: 0 });

    const series = await lead.json('/api/series', 'POST', {
      slug: 'api-fjord-salinity',
      name: 'Fjord salinity',
      siteId: id,
      unit: 'PSU',
      intervalMs: 3_600_000,
    });
    expect(series.status).toBe(201);
    expect(await series.json()).toMatchObject({ site: 'API fjord', siteId: id });
    expect((await lead.json('/api/series', 'POST', { slug: 'api-nowhere', name: 'Nowhere', siteId: 987654 })).status).toBe(422);
    const retired = await lead.json('/api/series/api-fjord-salinity', 'PATCH', { retired: true });
    expect(await retired.json()).toMatchObject({ retired: true });
    expect((await (await viewer.fetch('/api/sites/api-fjord')).json()).series).toEqual([]);
    const restored = await lead.json('/api/series/api-fjord-salinity', 'PATCH', { retired: false });
    expect(await restored.json()).toMatchObject({ retired: false });
    expect((await viewer.fetch('/api/sites/none')).status).toBe(404);
  });

  it('checks a bulk list without writing, then registers it whole; a viewer is refused', async () => {
    const csv = 'slug,name,site,interval\napi-bulk-1,Bulk one,API fjord,PT10M\napi-bulk-2,Bulk two,New shoal,P1D\n';
    expect((await viewer.json('/api/series/bulk?dryRun=1', 'POST', { csv })).status).toBe(403);
    const dry = await lead.json('/api/series/bulk?dryRun=1', 'POST', { csv });
    expect(dry.status).toBe(200);
    expect(await dry.json()).toMatchObject({ valid: true, created: 0, newSites: ['New shoal'] });
    expect((await lead.fetch('/api/series/api-bulk-1')).status).toBe(404);
    const bad = await lead.json('/api/series/bulk', 'POST', { csv: `${csv}api-bulk-1,Again,,\n` });
    expect(bad.status).toBe(422);
    expect((await bad.json()).error.fields['3.slug']).toEqual(['Also used in row 1 of this list.']);
    expect((await lead.fetch('/api/series/api-bulk-2')).status).toBe(404);
    const done = await lead.json('/api/series/bulk', 'POST', { csv });
    expect(done.status).toBe(201);
    expect((await done.json()).created).toBe(2);
    expect(await (await lead.fetch('/api/series/api-bulk-2')).json()).toMatchObject({ site: 'New shoal', intervalMs: 86_400_000 });
  });
});

describe("unknown addresses answer the app's own 404 page", () => {
  it.each([
    '/series/no-such-series',
    '/series/no-such-series/report',
    '/series/no-such-series/settings',
    '/alerts/999999',
    '/alerts/abc',
    '/sites/none',
    '/no/such/page',
  ])('%s', async (path) => {
    const response = await viewer.fetch(path);
    expect(response.status).toBe(404);
    // Rendered into the HTML, or (when a page raised it) carried in the page's data for the browser to draw: the
    // browser test checks what is shown.
    expect(await response.text()).toMatch(/data-testid(?:="|\\":\\")not-found/);
  });

  it('shows lead screens to a viewer as needing the lead role, without the forms', async () => {
    for (const path of ['/series/new', '/series/bulk']) {
      const html = await (await viewer.fetch(path)).text();
      expect(html).toContain('data-testid="role-needed"');
      expect(html).not.toContain('data-testid="series-form"');
    }
    const sites = await (await viewer.fetch('/sites')).text();
    expect(sites).toContain('data-testid="site-map"');
    expect(sites).not.toContain('data-testid="site-form"');
    expect(await (await lead.fetch('/sites')).text()).toContain('data-testid="site-form"');
  });
});
