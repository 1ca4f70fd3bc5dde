import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-intake-versions-');

const { migrateUp } = await import('@/migrations');
const { User } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { ingestObservations } = await import('@/lib/intake/pipeline');
const { loadObservations } = await import('@/lib/analysis/observations');
const { observationVersions } = await import('@/lib/intake/versions');

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
});
