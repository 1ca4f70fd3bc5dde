import { brinkwatch } from '../support/cli';
import { createHash } from 'node:crypto';
import { mkdtempSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

// A site analysis handed to a reviewer: the grid it saw, hashed, and the command line that gives its numbers again.
useTempDataDir('bw-site-provenance-');
const { migrateUp } = await import('@/migrations');
const { SiteSnapshot, User, closeDatabase, db } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { createSite } = await import('@/lib/sites/registry');
const { ingestObservations } = await import('@/lib/intake/pipeline');
const { refreshSiteAnalysis } = await import('@/lib/sites/analysis');
const { siteSnapshotDataCsv, canonicalGridCsv } = await import('@/lib/sites/provenance');
const { simulateAr1 } = await import('@/lib/demo/models');
const { ENGINE_VERSION } = await import('@/lib/engine/version');

const HOUR = 3_600_000;
const T0 = Date.UTC(2025, 2, 1);
const N = 400;

let snapshotId: number;

beforeAll(async () => {
  await migrateUp();
  await db();
  const lead = await User.create({ email: 'lead@example.test', name: 'Lead', role: 'lead', passwordHash: null });
  const site = await createSite({ slug: 'thermistor-chain', name: 'Thermistor chain' }, { id: lead.id });
  // Two sensors sharing a slow mode (AR(1), Box et al. 2015, Sec. 3.2) with their own noise; each detrended its own way,
  // one with a bandwidth given as a duration, so the grid step and each column's detrending both reach the engine.
  const members = [
    { slug: 'chain-2m', settings: { detrend: 'gaussian', bandwidth: 'PT48H', surrogates: 49, seed: 5 } },
    { slug: 'chain-8m', settings: { detrend: 'linear', surrogates: 49, seed: 5 } },
  ];
  const common = simulateAr1({ n: N, phi: 0.8, sigma: 1, seed: 21 });
  for (const [k, m] of members.entries()) {
    const series = await createSeries({ slug: m.slug, name: m.slug, intervalMs: HOUR, siteId: site.id, settings: m.settings }, null);
    const own = simulateAr1({ n: N, phi: 0.3, sigma: 0.5, seed: 30 + k });
    const csv = `time,value\n${Array.from({ length: N }, (_, i) => `${new Date(T0 + i * HOUR).toISOString()},${10 * (k + 1) + common[i] + own[i] + i / 3}`).join('\n')}\n`;
    expect((await ingestObservations({ series, source: 'upload', fileName: `${m.slug}.csv`, csv })).status).toBe('succeeded');
  }
  const snapshot = await refreshSiteAnalysis(site.id, 'test');
  expect(snapshot.status, snapshot.error ?? '').toBe('ok');
  snapshotId = snapshot.id;
}, 120_000);
afterAll(async () => {
  await closeDatabase();
});

describe('provenance of a site analysis', () => {
  it('keeps the grid it analysed and records its hash, the members with their data versions, the engine version and seed', async () => {
    const snapshot = (await SiteSnapshot.findByPk(snapshotId))!;
    expect(snapshot.grid!.values).toHaveLength(2);
    expect(snapshot.grid!.time).toHaveLength(snapshot.provenance!.instants);
    expect(snapshot.provenance).toMatchObject({
      canonicalForm: 'brinkwatch-site-grid-csv-v1',
      intervalMs: HOUR,
      members: [
        { slug: 'chain-2m', dataVersion: 1 },
        { slug: 'chain-8m', dataVersion: 1 },
      ],
      engineVersion: ENGINE_VERSION,
      seed: (snapshot.settings as { seed: number }).seed,
    });
    // SHA-256 from Node's crypto (OpenSSL), FIPS 180-4, over the canonical text of the stored grid
    const text = canonicalGridCsv(['chain-2m', 'chain-8m'], snapshot.grid!.time, snapshot.grid!.values);
    expect(createHash('sha256').update(text, 'utf8').digest('hex')).toBe(snapshot.provenance!.dataSha256);
  });

  it('the download is the canonical grid under # lines, and `sha256sum` of its rows is the recorded hash', async () => {
    const download = await siteSnapshotDataCsv(snapshotId);
    expect(download.matches).toBe(true);
    expect(download.fileName).toBe(`thermistor-chain-site-analysis-${snapshotId}.csv`);
    const lines = download.csv.split('\n');
    const comments = lines.filter((l) => l.startsWith('#'));
    for (const start of ['# settings: {', '# site: {', '# provenance: {', '# reproduce: brinkwatch analyze', '# caution: '])
      expect(comments.some((l) => l.startsWith(start))).toBe(true);
    const body = lines.filter((l) => !l.startsWith('#')).join('\n');
    expect(body.startsWith('time,chain-2m,chain-8m\n2025-03-')).toBe(true);
    expect(createHash('sha256').update(body, 'utf8').digest('hex')).toBe((await SiteSnapshot.findByPk(snapshotId))!.provenance!.dataSha256);
  });

  it('the command line on the download gives every site-level tau and p of the stored analysis to 1e-12', async () => {
    const download = await siteSnapshotDataCsv(snapshotId);
    const dir = mkdtempSync(path.join(os.tmpdir(), 'bw-site-reproduce-'));
    const file = path.join(dir, download.fileName);
    writeFileSync(file, download.csv);
    const command = /^# reproduce: brinkwatch (.*?) {3}/m.exec(download.csv)![1].split(' ');
    expect(command).toEqual(['analyze', download.fileName, '--multivariate', '--value', 'chain-2m,chain-8m', '--summary']);
    const run = brinkwatch(['analyze', file, ...command.slice(2)]);
    expect(run.stderr).toBe('');
    expect(run.status).toBe(0);
    const cli = JSON.parse(run.stdout) as { kendall: Record<string, { tau: number; p: number }>; significance: Record<string, { p: number }> };
    const summary = (await SiteSnapshot.findByPk(snapshotId))!.summary as typeof cli;
    const names = Object.keys(summary.kendall);
    expect(names.sort()).toEqual(['maf-ac1', 'pc1-share', 'pc1-variance']);
    for (const name of names) {
      expect(Math.abs(cli.kendall[name].tau - summary.kendall[name].tau), `${name} tau`).toBeLessThanOrEqual(1e-12);
      expect(Math.abs(cli.kendall[name].p - summary.kendall[name].p), `${name} Kendall p`).toBeLessThanOrEqual(1e-12);
      expect(Math.abs(cli.significance[name].p - summary.significance[name].p), `${name} surrogate p`).toBeLessThanOrEqual(1e-12);
    }
    // the # site: line is what makes them reproduce: without it each column takes the settings' detrending, and a tau moves
    const bare = path.join(dir, 'without-site-line.csv');
    writeFileSync(bare, download.csv.replace(/^# site: .*\n/m, ''));
    const plain = brinkwatch(['analyze', bare, ...command.slice(2)]);
    expect(plain.status).toBe(0);
    const moved = JSON.parse(plain.stdout) as typeof cli;
    expect(Math.max(...names.map((name) => Math.abs(moved.kendall[name].tau - summary.kendall[name].tau)))).toBeGreaterThan(1e-6);
  }, 180_000);

  it('answers 404 for an unknown site analysis and 409 for one stored before grids were kept', async () => {
    await expect(siteSnapshotDataCsv(999_999)).rejects.toMatchObject({ status: 404 });
    await SiteSnapshot.update({ grid: null, provenance: null }, { where: { id: snapshotId } });
    await expect(siteSnapshotDataCsv(snapshotId)).rejects.toMatchObject({ status: 409 });
  });
});
