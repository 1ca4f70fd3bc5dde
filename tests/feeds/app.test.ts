import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD, startApp, waitFor, type RunningApp } from '../support/app';
import { Session, signedIn } from '../support/session';

let app: RunningApp;
let lead: Session;
let analyst: Session;
let viewer: Session;

const HOUR = 3_600_000;
const T0 = Date.UTC(2025, 6, 1);
const SERIES = ['pier-temp', 'pier-sal', 'pier-do', 'pier-turb'];

beforeAll(async () => {
  app = await startApp({ env: { INGEST_CRON: '*/1 * * * * *' } });
  [lead, analyst, viewer] = await Promise.all(['lead', 'analyst', 'viewer'].map((r) => signedIn(app.baseUrl, `${r}@brinkwatch.test`, DEMO_PASSWORD)));
  for (const slug of SERIES) expect((await lead.json('/api/series', 'POST', { slug, name: slug, intervalMs: HOUR })).status).toBe(201);
});

afterAll(async () => {
  await app?.stop();
});

describe('station data through the API', () => {
  it('takes QC settings on a series and returns them', async () => {
    const qc = { grossRange: { fail: [-2, 35], suspect: [0, 30] }, spike: { suspect: 2, fail: 5 } };
    const patched = await lead.json('/api/series/pier-temp', 'PATCH', { qc });
    expect(patched.status).toBe(200);
    expect((await patched.json()).qc).toMatchObject(qc);
    expect((await (await viewer.fetch('/api/series/pier-temp')).json()).qc).toMatchObject(qc);
    const bad = await lead.json('/api/series/pier-temp', 'PATCH', { qc: { grossRange: { fail: [40, 0] } } });
    expect(bad.status).toBe(422);
    expect((await viewer.json('/api/series/pier-temp', 'PATCH', { qc })).status).toBe(403);
  });

  it('registers a feed and lands a dropped station file in four series with flags, in one report', async () => {
    const feed = {
      slug: 'pier-station',
      name: 'Pier station',
      timeColumn: 'Time',
      columns: { temp: 'pier-temp', sal: 'pier-sal', do: 'pier-do', turb: 'pier-turb' },
      flagColumns: { temp: 'temp_qc', sal: 'sal_qc', do: 'do_qc', turb: 'turb_qc' },
    };
    expect((await viewer.json('/api/feeds', 'POST', feed)).status).toBe(403);
    expect((await lead.json('/api/feeds', 'POST', { ...feed, columns: { temp: 'no-such-series' }, flagColumns: {} })).status).toBe(422);
    const created = await lead.json('/api/feeds', 'POST', feed);
    expect(created.status).toBe(201);
    expect(await created.json()).toMatchObject({ slug: 'pier-station', dropFolder: 'feeds/pier-station' });
    expect((await (await viewer.fetch('/api/feeds')).json()).feeds.map((f: { slug: string }) => f.slug)).toEqual(['pier-station']);

    const lines = ['Time,temp,temp_qc,sal,sal_qc,do,do_qc,turb,turb_qc'];
    for (let i = 0; i < 12; i++) {
      const temp = i === 4 ? 60 : 15 + (i % 2) / 10; // 60 °C is beyond the sensor's range
      lines.push([new Date(T0 + i * HOUR).toISOString(), temp, 1, 30 + i / 10, i === 7 ? 3 : 1, 8, 1, 2 + i, i === 9 ? 4 : 1].join(','));
    }
    const folder = path.join(app.dataDir, 'drops', 'feeds', 'pier-station');
    fs.mkdirSync(folder, { recursive: true });
    fs.writeFileSync(path.join(folder, 'pier.csv.part'), `${lines.join('\n')}\n`);
    fs.renameSync(path.join(folder, 'pier.csv.part'), path.join(folder, 'pier.csv'));
    const reportPath = path.join(folder, 'processed', 'pier.csv.report.json');
    await waitFor(app, 'the feed report', () => fs.existsSync(reportPath));
    const report = JSON.parse(fs.readFileSync(reportPath, 'utf8'));
    expect(report.series.map((s: { series: string; accepted: number }) => [s.series, s.accepted])).toEqual(SERIES.map((slug) => [slug, 12]));

    const points = async (slug: string) => (await (await viewer.fetch(`/api/series/${slug}/observations`)).json()).items as { t: number; flag: number }[];
    const temp = await points('pier-temp');
    expect(temp[4].flag).toBe(4);
    expect((await points('pier-sal'))[7].flag).toBe(3);
    expect((await points('pier-turb'))[9].flag).toBe(4);
    const marks = await (await viewer.fetch(`/api/series/pier-temp/observations/flags?from=${T0}&to=${T0 + 11 * HOUR}`)).json();
    expect(marks.points.map((p: { t: number; flag: number }) => [p.t, p.flag])).toContainEqual([T0 + 4 * HOUR, 4]);
  });

  it('takes an uploaded station file through the feed', async () => {
    const text = `Time,temp,temp_qc,sal,sal_qc,do,do_qc,turb,turb_qc\n${new Date(T0 + 12 * HOUR).toISOString()},15.2,1,31.2,1,8,1,14,1\n`;
    const form = () => {
      const body = new FormData();
      body.set('file', new Blob([text], { type: 'text/csv' }), 'pier-upload.csv');
      return body;
    };
    expect((await analyst.fetch('/api/feeds/pier-station/uploads', { method: 'POST', body: form() })).status).toBe(403);
    const uploaded = await lead.fetch('/api/feeds/pier-station/uploads', { method: 'POST', body: form() });
    expect(uploaded.status).toBe(200);
    const outcome = await uploaded.json();
    expect(outcome).toMatchObject({ feed: 'pier-station', status: 'succeeded' });
    expect(outcome.series.map((s: { accepted: number }) => s.accepted)).toEqual([1, 1, 1, 1]);
    expect((await lead.fetch('/api/feeds/no-such-feed/uploads', { method: 'POST', body: form() })).status).toBe(404);
  });

  it('re-runs the tests (lead) and takes an analyst override with a reason', async () => {
    expect((await analyst.json('/api/series/pier-do/qc/rerun', 'POST')).status).toBe(403);
    await lead.json('/api/series/pier-do', 'PATCH', { qc: { grossRange: { fail: [0, 7] } } });
    const rerun = await lead.json('/api/series/pier-do/qc/rerun', 'POST');
    expect(rerun.status).toBe(200);
    expect(await rerun.json()).toMatchObject({ points: 13, counts: { fail: 13 } });

    const at = new Date(T0 + 2 * HOUR).toISOString();
    expect((await viewer.json('/api/series/pier-do/observations/flags', 'POST', { from: at, to: at, flag: 1, reason: 'checked' })).status).toBe(403);
    expect((await analyst.json('/api/series/pier-do/observations/flags', 'POST', { from: at, to: at, flag: 1 })).status).toBe(422);
    const override = await analyst.json('/api/series/pier-do/observations/flags', 'POST', {
      from: at,
      to: at,
      flag: 1,
      reason: 'sonde cross-checked against a bottle sample',
    });
    expect(override.status).toBe(200);
    expect(await override.json()).toEqual({ changed: 1 });
    const items = (await (await viewer.fetch('/api/series/pier-do/observations')).json()).items as { flag: number }[];
    expect(items.map((p) => p.flag).filter((f) => f === 1)).toHaveLength(1);
  });
});
