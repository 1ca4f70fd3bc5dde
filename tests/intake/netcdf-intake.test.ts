import fs from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

const dataDir = useTempDataDir('bw-netcdf-');

const { migrateUp } = await import('@/migrations');
const { IngestRun, Series } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { createFeed } = await import('@/lib/feeds/registry');
const { runDropIntake } = await import('@/lib/intake/drop-folders');
const { ingestObservations, previewObservations } = await import('@/lib/intake/pipeline');
const { contentHashOf } = await import('@/lib/intake/content-hash');
const { loadFlaggedObservations, loadObservations } = await import('@/lib/analysis/observations');
const { formatInstant } = await import('@/lib/intake/time-formats');

const FIXTURES = path.resolve(__dirname, '../../fixtures/netcdf');
/** Values and instants as fixtures/netcdf/expected.json gives them (read by the netCDF4 library in make.py). */
const expected = JSON.parse(fs.readFileSync(path.join(FIXTURES, 'expected.json'), 'utf8'));

function drop(folder: string, fixture: string, name = fixture): void {
  fs.mkdirSync(folder, { recursive: true });
  fs.copyFileSync(path.join(FIXTURES, fixture), path.join(folder, name));
}
const report = (file: string) => JSON.parse(fs.readFileSync(file, 'utf8'));
const seriesFolder = (slug: string) => path.join(dataDir, 'drops', slug);
const seriesId = async (slug: string) => (await Series.findOne({ where: { slug } }))!.id;

beforeAll(async () => {
  await migrateUp();
  await createSeries({ slug: 'pier-temp', name: 'Pier temperature', csvMapping: { variable: 'temp' } }, null);
  await createSeries({ slug: 'pier-sal', name: 'Pier salinity' }, null);
  for (const slug of ['buoy-temp', 'buoy-oxygen', 'lake-chl']) await createSeries({ slug, name: slug }, null);
});

describe('netCDF files through the intake pipeline', () => {
  it("takes a dropped classic file into the series' named variable with its flags, and the same content once", async () => {
    drop(seriesFolder('pier-temp'), 'good-classic.nc', 'pier-0601.nc');
    const results = await runDropIntake({ settleMs: 0 });
    expect(results).toEqual([{ file: 'pier-temp/pier-0601.nc', status: 'succeeded', movedTo: 'processed/pier-0601.nc' }]);
    const first = report(path.join(seriesFolder('pier-temp'), 'processed', 'pier-0601.nc.report.json'));
    expect(first).toMatchObject({ status: 'succeeded', accepted: 5, rejected: 0 });
    expect(first.notes.join(' ')).toContain('_FillValue -999');
    const id = await seriesId('pier-temp');
    const stored = await loadFlaggedObservations(id);
    const want = expected['classic temp with its flags'];
    const kept = want.values.map((v: number | null, i: number) => [v, want.times[i]]).filter(([v]: [number | null]) => v !== null);
    expect(Array.from(stored.time, formatInstant)).toEqual(kept.map(([, t]: [number, string]) => t));
    expect(Array.from(stored.value)).toEqual(kept.map(([v]: [number]) => v));
    // QARTOD flags from temp_qc (pass, pass, suspect, fail, not evaluated); the fail is left out of the analysis.
    expect(Array.from(stored.flag)).toEqual([1, 1, 3, 4, 2]);
    expect((await loadObservations(id)).time.length).toBe(4);

    drop(seriesFolder('pier-temp'), 'good-classic.nc', 'pier-0601-again.nc');
    await runDropIntake({ settleMs: 0 });
    const again = report(path.join(seriesFolder('pier-temp'), 'processed', 'pier-0601-again.nc.report.json'));
    expect(again).toMatchObject({ status: 'succeeded', alreadyApplied: true, accepted: 0 });
    expect((await loadFlaggedObservations(id)).time.length).toBe(5);
  });

  it('refuses a truncated file whole, with the reason in the report, and stores nothing', async () => {
    drop(seriesFolder('pier-sal'), 'truncated-classic.nc');
    const [result] = await runDropIntake({ settleMs: 0 });
    expect(result).toMatchObject({ status: 'rejected', movedTo: 'rejected/truncated-classic.nc' });
    const refused = report(path.join(seriesFolder('pier-sal'), 'rejected', 'truncated-classic.nc.report.json'));
    expect(refused.message).toContain('truncated');
    const run = await IngestRun.findByPk(refused.runId);
    expect(run!.report).toMatchObject({ fileError: 'truncated' });
    expect((await loadFlaggedObservations(await seriesId('pier-sal'))).time.length).toBe(0);
  });

  it('previews an upload naming the variables to choose from, then stores the chosen one', async () => {
    const series = (await Series.findOne({ where: { slug: 'pier-sal' } }))!;
    const bytes = new Uint8Array(fs.readFileSync(path.join(FIXTURES, 'good-classic.nc')));
    const unnamed = await previewObservations(series, bytes, {});
    expect(unnamed.fileError).toMatchObject({ code: 'variable-needed', variables: ['sal', 'temp'] });
    const named = await previewObservations(series, bytes, { variable: 'sal' });
    expect(named.netcdf).toMatchObject({ format: 'classic', variable: 'sal', timeVariable: 'time', calendar: 'standard', candidates: ['sal', 'temp'] });
    expect(named.summary).toMatchObject({ rowsRead: 6, wouldAccept: 5, rejected: 0 });
    expect(named.sample[0].fields.slice(0, 2)).toEqual(['2023-12-04T00:00:00.000Z', '35.1']);

    const outcome = await ingestObservations({ series, source: 'upload', csv: bytes, contentHash: contentHashOf(bytes), mapping: { variable: 'sal' } });
    expect(outcome).toMatchObject({ status: 'succeeded', accepted: 5 });
    const stored = await loadFlaggedObservations(series.id);
    // CF 1.x §8.1: 0.001 × packed + 35, as netCDF4-python unpacks (expected.json).
    expect(Array.from(stored.value)).toEqual(expected['classic packed sal'].values.filter((v: number | null) => v !== null));
  });

  it('lands a netCDF-4 file in every series of a feed in one report, flags by meaning, and refuses a file missing a variable whole', async () => {
    await createFeed(
      { slug: 'buoy', name: 'Buoy', timeColumn: 'time', columns: { temp: 'buoy-temp', oxygen: 'buoy-oxygen' }, flagColumns: { temp: 'temp_qc' } },
      null,
    );
    const folder = path.join(dataDir, 'drops', 'feeds', 'buoy');
    drop(folder, 'good-netcdf4.nc', 'buoy-0301.nc');
    await runDropIntake({ settleMs: 0 });
    const landed = report(path.join(folder, 'processed', 'buoy-0301.nc.report.json'));
    expect(landed.status).toBe('succeeded');
    expect(landed.series.map((s: { series: string; accepted: number }) => [s.series, s.accepted])).toEqual([
      ['buoy-temp', 4],
      ['buoy-oxygen', 4],
    ]);
    // temp_qc "not_evaluated pass suspect fail missing_data" = 0..4; stored 1, 1, 2, 0 → pass, pass, suspect, not evaluated.
    expect(Array.from((await loadFlaggedObservations(await seriesId('buoy-temp'))).flag)).toEqual([1, 1, 3, 2]);
    const oxygen = await loadFlaggedObservations(await seriesId('buoy-oxygen'));
    expect(Array.from(oxygen.value)).toEqual(expected['netCDF-4 packed oxygen with valid_range'].values.filter((v: number | null) => v !== null));

    // The classic file has temp and sal but no oxygen: nothing of it may land in buoy-temp either.
    drop(folder, 'good-classic.nc', 'wrong-layout.nc');
    await runDropIntake({ settleMs: 0 });
    const refused = report(path.join(folder, 'rejected', 'wrong-layout.nc.report.json'));
    expect(refused.message).toContain('no variable "oxygen"');
    for (const entry of refused.series) expect(entry).toMatchObject({ status: 'rejected', accepted: 0 });
    expect((await loadFlaggedObservations(await seriesId('buoy-temp'))).time.length).toBe(4);
  });

  it('reads a netCDF-4 upload with its only data variable chosen without a name', async () => {
    const series = (await Series.findOne({ where: { slug: 'lake-chl' } }))!;
    const bytes = new Uint8Array(fs.readFileSync(path.join(FIXTURES, 'good-netcdf4-classic.nc')));
    const outcome = await ingestObservations({ series, source: 'upload', csv: bytes, contentHash: contentHashOf(bytes) });
    expect(outcome).toMatchObject({ status: 'succeeded', accepted: 3 });
    const stored = await loadFlaggedObservations(series.id);
    expect(Array.from(stored.time, formatInstant)).toEqual(expected['netCDF-4 classic model, one variable'].times);
  });
});
