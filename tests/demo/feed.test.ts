import fs from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { useTempDataDir } from '../support/temp-db';
import { freePort } from '../support/app';

// The live demo feed on a freshly seeded demo network, with the clock frozen at NOW so the records end where the
// expectations say. Pushes go only to a stand-in server of this file on loopback, or to a closed port.
const dataDir = useTempDataDir('bw-demo-feed-');
process.env.BCRYPT_COST = '10';
const { migrateUp } = await import('@/migrations');
const { AnalysisSnapshot, AppState, IngestToken, Observation, Series, closeDatabase, db } = await import('@/models');
const { seedIfEmpty } = await import('@/lib/demo/seed');
const { DEMO_FEED_MODELS, DEMO_BACKLOG_SAMPLES, demoRecordEnd } = await import('@/lib/demo/scenario');
const { SILENCE, feedCsv, loopbackAppUrl, pointsDue, runDemoFeed, silentAt, writeDropFile } = await import('@/lib/demo/feed');
const { observationExtent } = await import('@/lib/analysis/observations');
const { runDropIntake } = await import('@/lib/intake/drop-folders');
const { contentHashOf } = await import('@/lib/intake/content-hash');

const NOW = new Date('2031-05-17T15:42:07Z');
vi.useFakeTimers({ now: NOW, toFake: ['Date'] });
const HOUR = 3_600_000;
const DAY = 24 * HOUR;
const model = (slug: string) => DEMO_FEED_MODELS.find((m) => m.slug === slug)!;
const DROP = model('brandwhistle-sedge-biomass');
const INTERMITTENT = model('veskary-deep-temperature');
const PUSH = model('kestrith-station-pressure');
let closedUrl: string;

/**
 * What a finished analysis cycle of a station's series (the drop station's by default) leaves behind for the feed: a snapshot that saw up to
 * `dataTo` and the series no longer due (the analysis itself is not under test here).
 */
async function analysed(dataTo: number, slug = DROP.slug): Promise<void> {
  const series = (await Series.findOne({ where: { slug } }))!;
  await AnalysisSnapshot.create({ seriesId: series.id, settings: {}, summary: {}, curves: null, status: 'ok', error: null, n: 0, dataFrom: null, dataTo });
  await series.update({ needsAnalysis: false });
}

async function recordEnd(slug: string) {
  const series = await Series.findOne({ where: { slug } });
  const extent = await observationExtent(series!.id);
  const last = await Observation.findOne({ where: { seriesId: series!.id, t: extent.last! } });
  return { start: extent.first!, lastT: extent.last!, lastValue: last!.value };
}

beforeAll(async () => {
  await migrateUp();
  await db();
  await seedIfEmpty({ demo: true, password: 'demo-feed-test-pw' });
  closedUrl = `http://127.0.0.1:${await freePort()}`;
}, 120_000);
afterAll(async () => {
  vi.useRealTimers();
  await closeDatabase();
});

describe('the demo feed, pure part', () => {
  it('has one push station, one intermittent logger, and the rest writing drop files', () => {
    expect(DEMO_FEED_MODELS.filter((m) => m.delivery === 'push').map((m) => m.slug)).toEqual([PUSH.slug]);
    expect(DEMO_FEED_MODELS.filter((m) => m.delivery === 'intermittent').map((m) => m.slug)).toEqual([INTERMITTENT.slug]);
    expect(DEMO_FEED_MODELS.filter((m) => m.delivery === 'drop').length).toBe(DEMO_FEED_MODELS.length - 2);
  });

  it('continues every series on its grid right after the stored end, deterministically, and never after now', async () => {
    for (const m of DEMO_FEED_MODELS) {
      const end = await recordEnd(m.slug);
      expect(end.lastT).toBe(demoRecordEnd(NOW, m.intervalMs));
      // At the seeding instant the backlog is due: one sample per cycle (the logger: all, unless silent).
      const first = pointsDue(m, end, NOW.getTime());
      expect(first).toEqual(pointsDue(m, end, NOW.getTime()));
      const expectedCount = m.delivery === 'intermittent' ? (first.withheld ? 0 : DEMO_BACKLOG_SAMPLES) : 1;
      expect(first.points.length, m.slug).toBe(expectedCount);
      if (first.points.length) expect(first.points[0].t).toBe(end.lastT + m.intervalMs);
      // Any clock, before the record's end up to a month later: points only on the grid, after the end, up to now.
      for (let k = 0; k < 200; k++) {
        const now = end.lastT - DAY + ((k * 7919) % 200) * 3.7 * HOUR;
        const { points } = pointsDue(m, end, now);
        let previous = end.lastT;
        for (const p of points) {
          expect(p.t).toBeLessThanOrEqual(now);
          expect(p.t - previous).toBe(m.intervalMs);
          expect(Number.isFinite(p.value)).toBe(true);
          previous = p.t;
        }
        if (now < end.lastT + m.intervalMs) expect(points).toEqual([]);
      }
    }
  });

  it('is a continuation, not a restart: points made in one batch equal the same points made one cycle at a time', async () => {
    const end = await recordEnd(INTERMITTENT.slug);
    const last = Math.floor((end.lastT - end.start) / INTERMITTENT.intervalMs);
    // The first sample after a silent stretch: the logger sends everything since the end.
    let back = last + SILENCE.every;
    while (silentAt(back) || !silentAt(back - 1)) back++;
    const batch = pointsDue(INTERMITTENT, end, end.start + back * INTERMITTENT.intervalMs).points;
    expect(batch.length).toBe(back - last);
    const stepwise = { ...INTERMITTENT, delivery: 'drop' as const };
    let cursor = end;
    for (const expected of batch) {
      const [point] = pointsDue(stepwise, cursor, Number.MAX_SAFE_INTEGER).points;
      expect(point).toEqual(expected);
      cursor = { ...cursor, lastT: point.t, lastValue: point.value };
    }
  });

  it('keeps the intermittent logger silent for its stretch, then delivers what it held late, together', async () => {
    const end = await recordEnd(INTERMITTENT.slug);
    const last = Math.floor((end.lastT - end.start) / INTERMITTENT.intervalMs);
    let firstSilent = last + 1;
    while (!silentAt(firstSilent)) firstSilent++;
    const at = (index: number) => end.start + index * INTERMITTENT.intervalMs;
    // Up to the stretch the logger sends as usual; then, through the whole stretch, nothing.
    expect(pointsDue(INTERMITTENT, end, at(firstSilent) - 1).points.length).toBe(firstSilent - 1 - last);
    const upTo = { ...end, lastT: at(firstSilent - 1), lastValue: 0 };
    for (let k = 0; k < SILENCE.silent; k++) {
      const due = pointsDue(INTERMITTENT, upTo, at(firstSilent + k) + 30 * 60_000);
      expect(due.points).toEqual([]);
      expect(due.withheld).toBe(k + 1);
    }
    // Back: the held samples and the new one in one delivery, on the grid.
    const back = pointsDue(INTERMITTENT, upTo, at(firstSilent + SILENCE.silent));
    expect(back.points.map((p) => p.t)).toEqual(Array.from({ length: SILENCE.silent + 1 }, (_, k) => at(firstSilent + k)));
  });

  it('continues an AR(1) control as the same process: lag-1 autocorrelation and variance of 20,000 continued samples', () => {
    // Bartlett's approximation: the sample lag-1 autocorrelation of an AR(1) has standard error √((1 − φ²)/n)
    // (Box, Jenkins, Reinsel & Ljung 2015, Sec. 2.1.6; from memory). The sample variance of n AR(1) values has
    // variance ≈ 2γ0²(1 + φ²)/((1 − φ²)n) (same source, large-n form; from memory). Bounds at 4 standard errors.
    const n = 20_000;
    const start = Date.UTC(2030, 0, 1);
    const values = new Float64Array(n);
    let end = { start, lastT: start, lastValue: 912 };
    const stepwise = { ...PUSH };
    for (let i = 0; i < n; i++) {
      const [p] = pointsDue(stepwise, end, Number.MAX_SAFE_INTEGER).points;
      values[i] = p.value;
      end = { ...end, lastT: p.t, lastValue: p.value };
    }
    const mean = values.reduce((a, b) => a + b, 0) / n;
    let c0 = 0;
    let c1 = 0;
    for (let i = 0; i < n; i++) c0 += (values[i] - mean) ** 2;
    for (let i = 1; i < n; i++) c1 += (values[i] - mean) * (values[i - 1] - mean);
    const phi = 0.3;
    const gamma0 = 16 / (1 - phi * phi);
    expect(Math.abs(c1 / c0 - phi)).toBeLessThan(4 * Math.sqrt((1 - phi * phi) / n));
    expect(Math.abs(c0 / n - gamma0)).toBeLessThan(4 * Math.sqrt((2 * gamma0 * gamma0 * (1 + phi * phi)) / ((1 - phi * phi) * n)));
  });

  it('reaches the web server on loopback whatever address it binds', () => {
    const saved = { HOST: process.env.HOST, PORT: process.env.PORT };
    Object.assign(process.env, { HOST: '0.0.0.0', PORT: '4123' });
    expect(loopbackAppUrl()).toBe('http://127.0.0.1:4123');
    Object.assign(process.env, { HOST: '::1' });
    expect(loopbackAppUrl()).toBe('http://[::1]:4123');
    for (const [key, value] of Object.entries(saved)) {
      if (value === undefined) delete process.env[key];
      else process.env[key] = value;
    }
  });
});

describe('the demo feed, delivering', () => {
  it('writes a drop file complete under a hidden name, then renames it into place', () => {
    const folder = path.join(dataDir, 'atomic');
    const points = [
      { t: Date.UTC(2031, 4, 15), value: 1.5 },
      { t: Date.UTC(2031, 4, 16), value: -0.25 },
    ];
    const original = fs.renameSync.bind(fs);
    const seen: { visible: string[]; hidden: string }[] = [];
    const rename = vi.spyOn(fs, 'renameSync').mockImplementation((from, to) => {
      // At the moment of the rename the folder shows no CSV the intake would take, and the hidden file is whole.
      seen.push({ visible: fs.readdirSync(folder).filter((name) => !name.startsWith('.')), hidden: fs.readFileSync(from, 'utf8') });
      original(from, to);
    });
    const file = writeDropFile(folder, points);
    rename.mockRestore();
    expect(seen).toEqual([{ visible: [], hidden: feedCsv(points) }]);
    expect(path.basename(file)).toBe('demo-feed-20310515T000000Z.csv');
    expect(fs.readFileSync(file, 'utf8')).toBe('time,value\n2031-05-15T00:00:00.000Z,1.5\n2031-05-16T00:00:00.000Z,-0.25\n');
    expect(fs.readdirSync(folder)).toEqual(['demo-feed-20310515T000000Z.csv']);
  });

  it('delivers each drop station its way, waits while its file is not taken in or analysed, and continues from what was stored', async () => {
    const before = await recordEnd(DROP.slug);
    // Seeding leaves every record due for analysis, which does not hold a station's first delivery.
    const reports = await runDemoFeed({ now: NOW.getTime(), baseUrl: closedUrl });
    expect(reports.map((r) => r.slug)).toEqual(DEMO_FEED_MODELS.map((m) => m.slug));
    const drop = reports.find((r) => r.slug === DROP.slug)!;
    expect(drop.outcome).toBe('written');
    const folder = path.join(dataDir, 'drops', DROP.slug);
    const files = fs.readdirSync(folder);
    expect(files).toEqual([`demo-feed-${new Date(before.lastT + DAY).toISOString().slice(0, 10).replace(/-/g, '')}T000000Z.csv`]);
    expect(fs.readFileSync(path.join(folder, files[0]), 'utf8')).toBe(feedCsv(drop.points));
    // Not taken in yet: the next cycle waits rather than sending the same points again.
    expect((await runDemoFeed({ now: NOW.getTime(), baseUrl: closedUrl })).find((r) => r.slug === DROP.slug)!.outcome).toBe('waiting');
    expect(fs.readdirSync(folder)).toEqual(files);

    await runDropIntake({ settleMs: 0 });
    const after = await recordEnd(DROP.slug);
    expect(after).toEqual({ start: before.start, lastT: drop.points[0].t, lastValue: drop.points[0].value });
    // Taken in, not yet analysed: the next sample is held until it is.
    expect((await runDemoFeed({ now: NOW.getTime(), baseUrl: closedUrl })).find((r) => r.slug === DROP.slug)!.outcome).toBe('unanalysed');
    await analysed(after.lastT);
    const next = (await runDemoFeed({ now: NOW.getTime(), baseUrl: closedUrl })).find((r) => r.slug === DROP.slug)!;
    expect(next.outcome).toBe('written');
    expect(next.points.map((p) => p.t)).toEqual([after.lastT + DAY]);
    await runDropIntake({ settleMs: 0 });
    await analysed(after.lastT + DAY);
    // Caught up with the clock: nothing more until the next day's sample is due.
    expect((await runDemoFeed({ now: NOW.getTime(), baseUrl: closedUrl })).find((r) => r.slug === DROP.slug)!.outcome).toBe('up-to-date');
    expect((await recordEnd(DROP.slug)).lastT).toBe(Date.UTC(2031, 4, 17));
  });

  it('does not send a delivery again that the intake rejected', async () => {
    const slug = 'orlemere-oxygen-probe';
    const folder = path.join(dataDir, 'drops', slug);
    // Tomorrow's sample, refused by the intake as it would be after a lead changed the series' CSV mapping.
    const tomorrow = NOW.getTime() + DAY;
    // Its delivery of the test above is in; analysed, so the station is free to deliver again.
    await analysed((await recordEnd(slug)).lastT, slug);
    const due = pointsDue(model(slug), await recordEnd(slug), tomorrow).points;
    fs.mkdirSync(path.join(folder, 'rejected'), { recursive: true });
    fs.writeFileSync(path.join(folder, 'rejected', `demo-feed-${new Date(due[0].t).toISOString().slice(0, 10).replace(/-/g, '')}T000000Z.csv`), feedCsv(due));
    const refused = (await runDemoFeed({ now: tomorrow, baseUrl: closedUrl })).find((r) => r.slug === slug)!;
    expect(refused.outcome).toBe('refused');
    expect(fs.readdirSync(folder).filter((name) => name.endsWith('.csv'))).toEqual([]);
    await runDropIntake({ settleMs: 0 });
  });

  it("pushes with the series' own ingest token, keeps the points while the server is down, and stops once the token is revoked", async () => {
    // The closed port of the cycles above: nothing stored, a token issued and kept.
    const end = await recordEnd(PUSH.slug);
    const saved = await AppState.findByPk('demo-feed.push-token');
    const { id, token } = JSON.parse(saved!.value) as { id: number; token: string };
    const row = await IngestToken.findByPk(id);
    expect(row!.tokenHash).toBe(contentHashOf(token));
    expect(row!.seriesId).toBe((await Series.findOne({ where: { slug: PUSH.slug } }))!.id);
    expect(end.lastT).toBe(demoRecordEnd(NOW, DAY));
    const wanted = pointsDue(PUSH, end, NOW.getTime()).points;

    const received: { authorization?: string; body: unknown }[] = [];
    const server = http.createServer((request, response) => {
      let body = '';
      request.on('data', (chunk) => (body += chunk));
      request.on('end', () => {
        received.push({ authorization: request.headers.authorization, body: JSON.parse(body) });
        response.setHeader('content-type', 'application/json');
        response.end(JSON.stringify({ accepted: 1 }));
      });
    });
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    const url = `http://127.0.0.1:${(server.address() as { port: number }).port}`;
    try {
      const sent = (await runDemoFeed({ now: NOW.getTime(), baseUrl: url })).find((r) => r.slug === PUSH.slug)!;
      expect(sent.outcome).toBe('sent');
      expect(received).toEqual([{ authorization: `Bearer ${token}`, body: wanted.map((p) => ({ time: new Date(p.t).toISOString(), value: p.value })) }]);
      await row!.update({ revokedAt: new Date() });
      expect((await runDemoFeed({ now: NOW.getTime(), baseUrl: url })).find((r) => r.slug === PUSH.slug)!.outcome).toBe('refused');
      expect(received).toHaveLength(1);
      expect(await IngestToken.count()).toBe(1);
    } finally {
      await new Promise((resolve) => server.close(resolve));
    }
  });

  it('does nothing with SEED_DEMO=0', async () => {
    process.env.SEED_DEMO = '0';
    try {
      expect(await runDemoFeed({ now: NOW.getTime() + DAY, baseUrl: closedUrl })).toEqual([]);
    } finally {
      delete process.env.SEED_DEMO;
    }
  });
});
