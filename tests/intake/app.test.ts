import fs from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD, startApp, waitFor, type RunningApp } from '../support/app';
import { Session, signedIn } from '../support/session';

let app: RunningApp;
let admin: Session;
let lead: Session;
let viewer: Session;
let drops: string;

const csv = (start: number, n: number) =>
  `time,value\n${Array.from({ length: n }, (_, i) => `${new Date(start + i * 3_600_000).toISOString()},${i / 4}`).join('\n')}\n`;

/** Announces a body one byte over 50 MB and reads the answer before sending any of it (the server refuses on the header). */
function declaredTooLarge(auth: string): Promise<number> {
  return new Promise((resolve, reject) => {
    const request = http.request(`${app.baseUrl}/api/series/north-basin/observations`, {
      method: 'POST',
      headers: { authorization: auth, 'content-type': 'text/csv', 'content-length': String(50 * 1024 * 1024 + 1) },
    });
    request.on('response', (response) => {
      resolve(response.statusCode ?? 0);
      request.destroy();
    });
    request.on('error', reject);
    request.flushHeaders();
  });
}

const readReport = (file: string) => JSON.parse(fs.readFileSync(file, 'utf8'));

beforeAll(async () => {
  app = await startApp({ env: { INGEST_CRON: '*/1 * * * * *' } });
  drops = path.join(app.dataDir, 'drops');
  [admin, lead, viewer] = await Promise.all(['admin', 'lead', 'viewer'].map((r) => signedIn(app.baseUrl, `${r}@brinkwatch.test`, DEMO_PASSWORD)));
  for (const slug of ['north-basin', 'south-basin']) {
    expect((await lead.json('/api/series', 'POST', { slug, name: slug.replace('-', ' ') })).status).toBe(201);
  }
});

afterAll(async () => {
  await app?.stop();
});

describe('series registry', () => {
  it('answers 409 for a taken slug and 422 with field errors', async () => {
    expect((await lead.json('/api/series', 'POST', { slug: 'north-basin', name: 'Again' })).status).toBe(409);
    const bad = await lead.json('/api/series', 'POST', { slug: 'Bad Slug', name: '' });
    expect(bad.status).toBe(422);
    expect(Object.keys((await bad.json()).error.fields)).toEqual(expect.arrayContaining(['slug', 'name']));
  });

  it('lets a lead PATCH (settings history, retire/restore) and nobody below', async () => {
    expect((await viewer.json('/api/series/south-basin', 'PATCH', { unit: 'm' })).status).toBe(403);
    const invalid = await lead.json('/api/series/south-basin', 'PATCH', { timeZone: 'Mars/Olympus' });
    expect(invalid.status).toBe(422);
    expect((await invalid.json()).error.fields.timeZone).toBeDefined();
    const patched = await lead.json('/api/series/south-basin', 'PATCH', { unit: 'm', settings: { window: 0.4 } });
    expect(patched.status).toBe(200);
    expect(await patched.json()).toMatchObject({ unit: 'm', settings: { window: 0.4 } });
    expect((await (await lead.json('/api/series/south-basin', 'PATCH', { retired: true })).json()).retired).toBe(true);
    expect((await (await lead.json('/api/series/south-basin', 'PATCH', { retired: false })).json()).retired).toBe(false);
  });
});

describe('drop folders', () => {
  it('takes a good file, rejects a bad one with a report, and recognises the same file twice', async () => {
    const folder = path.join(drops, 'north-basin');
    fs.mkdirSync(folder, { recursive: true });
    const good = csv(Date.UTC(2024, 0, 1), 48);
    fs.writeFileSync(path.join(folder, 'good.csv'), good);
    fs.writeFileSync(path.join(folder, 'empty-header.csv'), 'time,value\n');
    const report = await waitFor(
      app,
      'good.csv processed',
      () => fs.existsSync(path.join(folder, 'processed', 'good.csv.report.json')) && readReport(path.join(folder, 'processed', 'good.csv.report.json')),
    );
    expect(report).toMatchObject({ status: 'succeeded', rowsRead: 48, accepted: 48, duplicates: 0, rejected: 0 });
    expect(fs.existsSync(path.join(folder, 'processed', 'good.csv'))).toBe(true);
    const rejected = await waitFor(
      app,
      'empty-header.csv rejected',
      () =>
        fs.existsSync(path.join(folder, 'rejected', 'empty-header.csv.report.json')) &&
        readReport(path.join(folder, 'rejected', 'empty-header.csv.report.json')),
    );
    expect(rejected.message).toContain('header line but no data rows');

    fs.writeFileSync(path.join(folder, 'good-copy.csv'), good);
    const again = await waitFor(
      app,
      'good-copy.csv processed',
      () =>
        fs.existsSync(path.join(folder, 'processed', 'good-copy.csv.report.json')) && readReport(path.join(folder, 'processed', 'good-copy.csv.report.json')),
    );
    expect(again).toMatchObject({ alreadyApplied: true, previousRunId: report.runId, accepted: 0 });

    const detail = await (await viewer.fetch('/api/series/north-basin')).json();
    expect(detail.observations).toEqual({ count: 48, first: Date.UTC(2024, 0, 1), last: Date.UTC(2024, 0, 1) + 47 * 3_600_000 });

    const runs = await (await viewer.fetch('/api/ingest-runs?series=north-basin&status=rejected')).json();
    expect(runs.items.map((r: { fileName: string }) => r.fileName)).toContain('empty-header.csv');
    const one = await (await viewer.fetch(`/api/ingest-runs/${report.runId}`)).json();
    expect(one).toMatchObject({ id: report.runId, status: 'succeeded', accepted: 48, report: { rejectedRows: [] } });

    const listing = await (await viewer.fetch('/api/drop-folders')).json();
    expect(listing.items.find((f: { slug: string }) => f.slug === 'north-basin').rejected[0]).toMatchObject({
      file: 'empty-header.csv',
      runId: rejected.runId,
    });
  });

  it('leaves a file still being written (.part) alone until it is renamed, and reports unknown folders', async () => {
    const folder = path.join(drops, 'north-basin');
    fs.writeFileSync(path.join(folder, 'late.csv.part'), csv(Date.UTC(2024, 1, 1), 5));
    fs.mkdirSync(path.join(drops, 'no-such-series'), { recursive: true });
    fs.writeFileSync(path.join(drops, 'no-such-series', 'x.csv'), csv(Date.UTC(2024, 1, 1), 2));
    await new Promise((r) => setTimeout(r, 3500));
    expect(fs.existsSync(path.join(folder, 'late.csv.part'))).toBe(true);
    fs.renameSync(path.join(folder, 'late.csv.part'), path.join(folder, 'late.csv'));
    const report = await waitFor(
      app,
      'late.csv processed',
      () => fs.existsSync(path.join(folder, 'processed', 'late.csv.report.json')) && readReport(path.join(folder, 'processed', 'late.csv.report.json')),
    );
    expect(report.accepted).toBe(5);
    expect(fs.existsSync(path.join(drops, 'no-such-series', 'x.csv'))).toBe(true);
    const listing = await (await viewer.fetch('/api/drop-folders')).json();
    expect(listing.items.find((f: { slug: string }) => f.slug === 'no-such-series')).toMatchObject({ known: false, pending: ['x.csv'] });
    expect(app.output()).toContain('"no-such-series" matches no registered series');
  });
});

describe('push API and ingest tokens', () => {
  it('accepts a good token, refuses missing, bad, revoked and other-series tokens', async () => {
    expect((await lead.json('/api/series/north-basin/tokens', 'POST', { label: 'x' })).status).toBe(403);
    const issued = await admin.json('/api/series/north-basin/tokens', 'POST', { label: 'buoy gateway' });
    expect(issued.status).toBe(201);
    const { id, token } = await issued.json();
    const other = await (await admin.json('/api/series/south-basin/tokens', 'POST', {})).json();
    const push = (auth: string | null, body: string, type = 'application/json') =>
      fetch(`${app.baseUrl}/api/series/north-basin/observations`, {
        method: 'POST',
        body,
        headers: { 'content-type': type, ...(auth ? { authorization: auth } : {}) },
      });
    const points = JSON.stringify([
      { time: '2024-03-01T00:00:00Z', value: 1.5 },
      { time: '2024-03-01T01:00:00Z', value: 'oops' },
      { time: '2024-01-01T00:00:00Z', value: 0 },
    ]);
    const ok = await push(`Bearer ${token}`, points);
    expect(ok.status).toBe(200);
    expect(await ok.json()).toMatchObject({ accepted: 1, duplicates: 1, rejected: [{ line: 2, reason: '"oops" is not a number' }] });
    const csvPush = await push(`Bearer ${token}`, 'time,value\n2024-03-02T00:00:00Z,2\n', 'text/csv');
    expect(await csvPush.json()).toMatchObject({ accepted: 1, duplicates: 0, rejected: [] });

    expect((await push(null, points)).status).toBe(401);
    expect((await push('Bearer bwi_not-a-token', points)).status).toBe(401);
    expect((await push(`Bearer ${other.token}`, points)).status).toBe(403);
    expect((await push(`Bearer ${token}`, '<xml/>', 'application/xml')).status).toBe(415);
    const useless = await push(`Bearer ${token}`, JSON.stringify([{ time: 'soon', value: 1 }]));
    expect(useless.status).toBe(422);
    expect((await useless.json()).error.fields['line.1'][0]).toContain('not an ISO 8601');
    expect(await declaredTooLarge(`Bearer ${token}`)).toBe(413);

    const listed = await (await admin.fetch('/api/series/north-basin/tokens')).json();
    expect(listed.items[0]).toMatchObject({ id, label: 'buoy gateway', revoked: false });
    expect(listed.items[0].lastUsedAt).not.toBeNull();
    expect(JSON.stringify(listed)).not.toContain(token);
    expect((await admin.fetch(`/api/tokens/${id}`, { method: 'DELETE' })).status).toBe(200);
    expect((await push(`Bearer ${token}`, points)).status).toBe(401);

    const bySession = await lead.fetch('/api/series/north-basin/observations', {
      method: 'POST',
      headers: { 'content-type': 'text/csv' },
      body: 'time,value\n2024-03-03T00:00:00Z,3\n',
    });
    expect(await bySession.json()).toMatchObject({ accepted: 1 });
    expect(
      (await viewer.fetch('/api/series/north-basin/observations', { method: 'POST', headers: { 'content-type': 'text/csv' }, body: 'time,value\n' })).status,
    ).toBe(403);
  });

  it('reads observations back as JSON and CSV with from/to', async () => {
    const json = await (await viewer.fetch(`/api/series/north-basin/observations?from=2024-03-01T00:00:00Z&to=${Date.UTC(2024, 2, 2)}`)).json();
    expect(json.items).toEqual([
      { time: '2024-03-01T00:00:00.000Z', t: Date.UTC(2024, 2, 1), value: 1.5, flag: 2 },
      { time: '2024-03-02T00:00:00.000Z', t: Date.UTC(2024, 2, 2), value: 2, flag: 2 },
    ]);
    const text = await (await viewer.fetch('/api/series/north-basin/observations?format=csv&from=2024-03-01T00:00:00Z')).text();
    expect(text).toBe(
      `time,t,value,flag\n2024-03-01T00:00:00.000Z,${Date.UTC(2024, 2, 1)},1.5,2\n2024-03-02T00:00:00.000Z,${Date.UTC(2024, 2, 2)},2,2\n2024-03-03T00:00:00.000Z,${Date.UTC(2024, 2, 3)},3,2\n`,
    );
    expect((await viewer.fetch('/api/series/north-basin/observations?from=yesterday')).status).toBe(422);
  });
});

describe('uploads', () => {
  it('previews without storing, then commits with the chosen mapping', async () => {
    const body = () => {
      const form = new FormData();
      form.append('file', new Blob(['station;when;level\nN1;1711929600;4,5\nN1;1711933200;4.75\n']), 'levels.csv');
      return form;
    };
    expect((await viewer.fetch('/api/series/south-basin/uploads/preview', { method: 'POST', body: body() })).status).toBe(403);
    const preview = await (await lead.fetch('/api/series/south-basin/uploads/preview', { method: 'POST', body: body() })).json();
    expect(preview.layout).toMatchObject({ delimiter: ';', header: ['station', 'when', 'level'] });
    expect(preview.fileName).toBe('levels.csv');
    const form = body();
    form.append('mapping', JSON.stringify({ timeColumn: 'when', valueColumn: 'level', timeFormat: 'epoch-seconds' }));
    const committed = await (await lead.fetch('/api/series/south-basin/uploads', { method: 'POST', body: form })).json();
    expect(committed).toMatchObject({ status: 'succeeded', accepted: 1, rejected: 1 });
    expect(committed.rejectedRows[0]).toMatchObject({ line: 2, column: 'level' });
    expect(committed.rejectedRows[0].reason).toContain('comma as decimal mark');
    const page = await viewer.fetch('/intake');
    expect(page.status, app.output().slice(-4000)).toBe(200);
    expect(await page.text()).toContain('Ingest runs');
  });
});
