import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-intake-versions-');

const { migrateUp } = await import('@/migrations');
const { User } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { ingestObservations } = await import('@/lib/intake/pipeline');
const { loadObservations } = await import('@/lib/analysis/observations');
const { observationVersions } = await import('@/lib/intake/versions');
const { currentDataVersion, listDataVersions } = await import('@/lib/intake/data-versions');
const { Observation } = await import('@/models');
const { readIntakeBody, storedDelivery } = await import('@/lib/intake/request-body');
const { MAX_REASON_LENGTH } = await import('@/lib/intake/choices');
const { UnprocessableError } = await import('@/lib/http/errors');

beforeAll(async () => {
  await migrateUp();
});

const DAY = 86_400_000;
const T0 = Date.UTC(2024, 0, 1);
const csv = (values: number[]) => `time,value\n${values.map((v, i) => `${new Date(T0 + i * DAY).toISOString()},${v}`).join('\n')}\n`;

describe('reprocessed data', () => {
  it('keeps each replaced value as an earlier version naming the run and person that replaced it', async () => {
    const lead = await User.create({ email: 'lead@example.test', name: 'Lead', role: 'lead', passwordHash: 'not-used', active: true });
    const series = await createSeries({ slug: 'lake-chl', name: 'Lake chlorophyll', duplicatePolicy: 'replace' }, null);
    const first = await ingestObservations({ series, source: 'drop', fileName: 'raw.csv', csv: csv([1, 2, 3]) });
    const second = await ingestObservations({ series, source: 'upload', fileName: 'reprocessed-v2.csv', csv: csv([1, 2.5, 3.5]), actor: lead });
    expect(second).toMatchObject({ replaced: 2, duplicates: 1 });
    await ingestObservations({ series, source: 'upload', fileName: 'reprocessed-v3.csv', csv: csv([1, 2.4, 3.5]), actor: lead });
    expect(Array.from((await loadObservations(series.id)).value)).toEqual([1, 2.4, 3.5]);
    const versions = await observationVersions(series.id, {});
    // day 2: v3 replaced 2.5 (written by v2), v2 replaced 2 (written by the raw file); newest replacement first
    expect(versions.map((v) => [v.t, v.value, v.writtenByRun, v.replacedBy.fileName, v.replacedBy.userId])).toEqual([
      [T0 + DAY, 2.5, second.runId, 'reprocessed-v3.csv', lead.id],
      [T0 + DAY, 2, first.runId, 'reprocessed-v2.csv', lead.id],
      [T0 + 2 * DAY, 3, first.runId, 'reprocessed-v2.csv', lead.id],
    ]);
    expect(Number.isNaN(Date.parse(versions[0].replacedAt))).toBe(false);
    expect(await observationVersions(series.id, { from: T0 + 2 * DAY })).toHaveLength(1);
  });

  it('numbers a data version per run that stored something, with its reason, and rebuilds the record at each one', async () => {
    // Hand-worked (common practice for versioned records: a value holds from the version that wrote it until the
    // version that replaced it): v1 stores days 0-2, v2 replaces day 1 and appends day 3, a repeat changes nothing,
    // v3 replaces day 1 again and day 3.
    const lead = await User.create({ email: 'lead2@example.test', name: 'Lead Two', role: 'lead', passwordHash: 'not-used', active: true });
    const series = await createSeries({ slug: 'lake-do', name: 'Lake oxygen', duplicatePolicy: 'replace' }, null);
    expect(await currentDataVersion(series.id)).toBe(0);
    const v1 = await ingestObservations({ series, source: 'drop', fileName: 'raw.csv', csv: csv([10, 20, 30]) });
    const v2 = await ingestObservations({ series, source: 'upload', fileName: 'fix.csv', csv: csv([10, 21, 30, 40]), actor: lead, reason: 'drift corrected' });
    const repeat = await ingestObservations({ series, source: 'upload', fileName: 'fix-again.csv', csv: csv([10, 21]), actor: lead });
    expect(repeat).toMatchObject({ accepted: 0, replaced: 0 });
    const v3 = await ingestObservations({
      series,
      source: 'push',
      points: [
        { time: new Date(T0 + DAY).toISOString(), value: 22 },
        { time: new Date(T0 + 3 * DAY).toISOString(), value: 41 },
      ],
    });
    expect(await currentDataVersion(series.id)).toBe(3);
    const versions = await listDataVersions(series.id);
    expect(versions.map((v) => [v.version, v.runId, v.inserted, v.replaced, v.reason, v.fileName, v.userName])).toEqual([
      [3, v3.runId, 0, 2, null, null, null],
      [2, v2.runId, 1, 1, 'drift corrected', 'fix.csv', 'Lead Two'],
      [1, v1.runId, 3, 0, null, 'raw.csv', null],
    ]);
    const at = async (version: number | undefined) => {
      const rows = await loadObservations(series.id, { version });
      return [Array.from(rows.time, (t) => (t - T0) / DAY), Array.from(rows.value)];
    };
    expect(await at(0)).toEqual([[], []]);
    expect(await at(1)).toEqual([
      [0, 1, 2],
      [10, 20, 30],
    ]);
    expect(await at(2)).toEqual([
      [0, 1, 2, 3],
      [10, 21, 30, 40],
    ]);
    expect(await at(3)).toEqual([
      [0, 1, 2, 3],
      [10, 22, 30, 41],
    ]);
    expect(await at(3)).toEqual(await at(undefined));
    // A flag-only change is no new version: a failed point leaves every rebuilt version alike (documented).
    await Observation.update({ flag: 4 }, { where: { seriesId: series.id, t: T0 + 2 * DAY } });
    expect((await at(3))[1]).toEqual([10, 22, 41]);
  });

  it('takes the reason for a delivery from the multipart `reason` part or the `reason` query parameter', async () => {
    const form = new FormData();
    form.set('file', new File(['time,value\n2024-01-01T00:00:00Z,1\n'], 'reprocessed.csv', { type: 'text/csv' }));
    form.set('reason', '  calibration offset corrected  ');
    const upload = await readIntakeBody(new Request('http://127.0.0.1/api/series/x/uploads', { method: 'POST', body: form }), { allowJson: false });
    expect(upload.reason).toBe('calibration offset corrected');
    const push = await readIntakeBody(
      new Request('http://127.0.0.1/api/series/x/observations?reason=reprocessed%20v2', {
        method: 'POST',
        headers: { 'content-type': 'application/json' },
        body: JSON.stringify([{ time: '2024-01-01T00:00:00Z', value: 1, flag: 1 }]),
      }),
      { allowJson: true },
    );
    expect(push.reason).toBe('reprocessed v2');
    expect(push.points).toEqual([{ time: '2024-01-01T00:00:00Z', value: 1, flag: 1 }]);
    const plain = await readIntakeBody(new Request('http://127.0.0.1/x', { method: 'POST', headers: { 'content-type': 'text/csv' }, body: 'a' }), {
      allowJson: false,
    });
    expect(plain.reason).toBeNull();
    const long = readIntakeBody(
      new Request(`http://127.0.0.1/x?reason=${'r'.repeat(MAX_REASON_LENGTH + 1)}`, { method: 'POST', headers: { 'content-type': 'text/csv' }, body: 'a' }),
      { allowJson: false },
    );
    await expect(long).rejects.toBeInstanceOf(UnprocessableError);
  });

  it('a reprocessing upload replaces stored values on a series whose policy rejects them, and must say why', async () => {
    const series = await createSeries({ slug: 'lake-ph', name: 'Lake pH' }, null);
    expect(series.duplicatePolicy).toBe('reject');
    await ingestObservations({ series, source: 'drop', fileName: 'raw.csv', csv: csv([7.1, 7.2, 7.3]) });
    const refused = await ingestObservations({ series, source: 'upload', fileName: 'fixed.csv', csv: csv([7.1, 7.25, 7.3]) });
    expect(refused).toMatchObject({ replaced: 0, rejected: 1 });
    expect(() => storedDelivery({ duplicatePolicy: 'replace', reason: null, contentHash: 'abc' })).toThrow(UnprocessableError);
    const delivery = storedDelivery({ duplicatePolicy: 'replace', reason: 'pH electrode recalibrated', contentHash: 'abc' });
    // The same file sent again as reprocessed data is a new delivery, not the one already applied under `reject`.
    expect(delivery.contentHash).not.toBe('abc');
    const reprocessed = await ingestObservations({ series, source: 'upload', fileName: 'fixed.csv', csv: csv([7.1, 7.25, 7.3]), ...delivery });
    expect(reprocessed).toMatchObject({ status: 'succeeded', replaced: 1, rejected: 0 });
    expect(Array.from((await loadObservations(series.id)).value)).toEqual([7.1, 7.25, 7.3]);
    expect((await listDataVersions(series.id))[0]).toMatchObject({ version: 2, replaced: 1, reason: 'pH electrode recalibrated' });
    expect(Array.from((await loadObservations(series.id, { version: 1 })).value)).toEqual([7.1, 7.2, 7.3]);
  });
});
