import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-site-maintenance-');

const { migrateUp } = await import('@/migrations');
const { Series, User, AuditEntry } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { markSiteMaintenance } = await import('@/lib/marks/write');
const { seriesBreaks } = await import('@/lib/analysis/snapshot');
const { runAnalysis, analysisSettingsSchema } = await import('@/lib/engine');
const { ingestObservations } = await import('@/lib/intake/pipeline');
const { loadObservations } = await import('@/lib/analysis/observations');

const HOUR = 3_600_000;
const T0 = Date.UTC(2025, 2, 1);

beforeAll(async () => {
  await migrateUp();
});

describe('a maintenance visit for a whole site', () => {
  it('marks every active series of the site once, and the analysed stretch starts after it', async () => {
    const lead = await User.create({ email: 'lead@example.test', name: 'Lead', role: 'lead', passwordHash: 'not-used', active: true });
    const temp = await createSeries({ slug: 'buoy7-temp', name: 'Buoy 7 temperature', site: 'Buoy 7', intervalMs: HOUR }, null);
    const chl = await createSeries({ slug: 'buoy7-chl', name: 'Buoy 7 chlorophyll', site: 'Buoy 7', intervalMs: HOUR }, null);
    const retired = await createSeries({ slug: 'buoy7-old', name: 'Buoy 7 old sensor', site: 'Buoy 7' }, null);
    await Series.update({ retiredAt: new Date() }, { where: { id: retired.id } });
    await createSeries({ slug: 'buoy8-temp', name: 'Buoy 8 temperature', site: 'Buoy 8' }, null);

    const at = T0 + 300 * HOUR;
    const result = await markSiteMaintenance('buoy-7', { at, note: 'annual service, all sensors swapped' }, lead);
    expect(result.marks.map((m) => [m.seriesId, m.at, m.kind])).toEqual([
      [temp.id, at, 'maintenance'],
      [chl.id, at, 'maintenance'],
    ]);
    expect(await AuditEntry.count({ where: { action: 'mark.create' } })).toBe(2);
    await expect(markSiteMaintenance('no-such-site', { at, note: '' }, lead)).rejects.toMatchObject({ status: 404 });

    // the engine's stretch starts at the mark (the analysis reads the series' marks as breaks)
    const csv = `time,value\n${Array.from({ length: 600 }, (_, i) => `${new Date(T0 + i * HOUR).toISOString()},${Math.sin(i / 7) + i / 100}`).join('\n')}\n`;
    await ingestObservations({ series: temp, source: 'drop', csv });
    const { time, value } = await loadObservations(temp.id);
    const breaks = await seriesBreaks(temp.id);
    const analysed = await runAnalysis({ time, value, intervalMs: HOUR, breaks }, analysisSettingsSchema.parse({ surrogates: 0, shiftDetection: 'off' }), {
      parallel: false,
    });
    expect(analysed.stretch).toMatchObject({ from: at, startsAfter: 'maintenance' });
  });
});
