import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD, startApp, waitFor, type RunningApp } from '../support/app';
import { Session, signedIn } from '../support/session';

const FIXTURES = path.resolve(__dirname, '../../fixtures/netcdf');
/** Instants and values the netCDF4 library reads from the fixtures (fixtures/netcdf/make.py → expected.json). */
const expected = JSON.parse(fs.readFileSync(path.join(FIXTURES, 'expected.json'), 'utf8'));
const present = (name: string) => {
  const c = expected[name];
  return c.values.map((value: number | null, i: number) => ({ time: c.times[i], value })).filter((x: { value: number | null }) => x.value !== null);
};

let app: RunningApp;
let lead: Session;
let viewer: Session;

function upload(fixture: string, mapping?: Record<string, string>): FormData {
  const form = new FormData();
  form.append('file', new Blob([fs.readFileSync(path.join(FIXTURES, fixture))], { type: 'application/x-netcdf' }), fixture);
  if (mapping) form.append('mapping', JSON.stringify(mapping));
  return form;
}

beforeAll(async () => {
  app = await startApp({ env: { INGEST_CRON: '*/1 * * * * *' } });
  [lead, viewer] = await Promise.all(['lead', 'viewer'].map((r) => signedIn(app.baseUrl, `${r}@brinkwatch.test`, DEMO_PASSWORD)));
  expect((await lead.json('/api/series', 'POST', { slug: 'harbour-oxygen', name: 'Harbour oxygen', csvMapping: { variable: 'oxygen' } })).status).toBe(201);
  expect((await lead.json('/api/series', 'POST', { slug: 'harbour-sal', name: 'Harbour salinity' })).status).toBe(201);
});

afterAll(async () => {
  await app?.stop();
});

describe('netCDF on the started product', () => {
  it('takes a netCDF-4 file dropped into a series folder, by the scheduler, into GET observations', async () => {
    const folder = path.join(app.dataDir, 'drops', 'harbour-oxygen');
    fs.mkdirSync(folder, { recursive: true });
    // Written under a hidden name and renamed, as a logger's transfer should, so the pass never sees half a file.
    fs.copyFileSync(path.join(FIXTURES, 'good-netcdf4.nc'), path.join(folder, '.buoy.nc.part'));
    fs.renameSync(path.join(folder, '.buoy.nc.part'), path.join(folder, 'buoy.nc'));
    const reportFile = path.join(folder, 'processed', 'buoy.nc.report.json');
    const report = await waitFor(app, 'buoy.nc processed', () => fs.existsSync(reportFile) && JSON.parse(fs.readFileSync(reportFile, 'utf8')));
    expect(report).toMatchObject({ status: 'succeeded', accepted: 4 });
    const json = await (await viewer.fetch('/api/series/harbour-oxygen/observations')).json();
    // No flag variable: stored "not evaluated" (QARTOD 2) until the series' own tests judge them.
    expect(json.items.map((item: { time: string; value: number; flag: number }) => ({ time: item.time, value: item.value }))).toEqual(
      present('netCDF-4 packed oxygen with valid_range'),
    );
  });

  it('previews and commits an uploaded classic file with the chosen variable through the web tier; a bad file is a 422 naming the problem', async () => {
    expect((await viewer.fetch('/api/series/harbour-sal/uploads/preview', { method: 'POST', body: upload('good-classic.nc') })).status).toBe(403);
    const unnamed = await (await lead.fetch('/api/series/harbour-sal/uploads/preview', { method: 'POST', body: upload('good-classic.nc') })).json();
    expect(unnamed.fileError).toMatchObject({ code: 'variable-needed', variables: ['sal', 'temp'] });
    const previewNc4 = await (
      await lead.fetch('/api/series/harbour-sal/uploads/preview', { method: 'POST', body: upload('good-netcdf4.nc', { variable: 'temp' }) })
    ).json();
    expect(previewNc4.netcdf).toMatchObject({ format: 'netCDF-4', variable: 'temp', flagVariable: null });
    const committed = await lead.fetch('/api/series/harbour-sal/uploads', { method: 'POST', body: upload('good-classic.nc', { variable: 'sal' }) });
    expect(committed.status, app.output().slice(-3000)).toBe(200);
    expect(await committed.json()).toMatchObject({ status: 'succeeded', accepted: 5, rejected: 0 });
    const json = await (await viewer.fetch('/api/series/harbour-sal/observations')).json();
    expect(json.items.map((item: { time: string; value: number }) => ({ time: item.time, value: item.value }))).toEqual(present('classic packed sal'));

    const truncated = await lead.fetch('/api/series/harbour-sal/uploads', { method: 'POST', body: upload('truncated-netcdf4.nc', { variable: 'temp' }) });
    expect(truncated.status).toBe(422);
    expect((await truncated.json()).message).toContain('truncated');
  });
});
