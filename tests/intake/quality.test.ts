import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-intake-quality-');

const { migrateUp } = await import('@/migrations');
const { Series, AuditEntry, User, db } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');
const { ingestObservations } = await import('@/lib/intake/pipeline');
const { loadObservations, loadFlaggedObservations } = await import('@/lib/analysis/observations');
const { rerunQuality, overrideFlags } = await import('@/lib/quality/records');
const { fetchIngestRun } = await import('@/lib/intake/runs');
const { runAnalysis, analysisSettingsSchema } = await import('@/lib/engine');

beforeAll(async () => {
  await migrateUp();
});

const HOUR = 3_600_000;
const T0 = Date.UTC(2025, 0, 1);
const iso = (i: number) => new Date(T0 + i * HOUR).toISOString();

/** Seeded noise (Park–Miller minimal standard generator), so every run sees the same record. */
function noise(n: number, seed = 11): number[] {
  let state = seed;
  return Array.from({ length: n }, () => {
    state = (state * 16807) % 2147483647;
    return state / 2147483647 - 0.5;
  });
}

async function storedFlags(seriesId: number) {
  await db();
  const { flag, time } = await loadFlaggedObservations(seriesId);
  return { flag: Array.from(flag), time: Array.from(time) };
}

describe('quality flags at intake', () => {
  it('keeps the source flags of a flag column, rejects flags off the scale and skips rows flagged missing', async () => {
    const series = await createSeries(
      { slug: 'sonde-do', name: 'Sonde DO', csvMapping: { timeColumn: 'time', valueColumn: 'do', flagColumn: 'do_qc', timeFormat: 'iso8601' } },
      null,
    );
    const text = ['time,do,do_qc', `${iso(0)},8.1,1`, `${iso(1)},8.2,3`, `${iso(2)},12.5,4`, `${iso(3)},,9`, `${iso(4)},8.3,`, `${iso(5)},8.4,7`].join('\n');
    const outcome = await ingestObservations({ series, source: 'drop', csv: text });
    expect(outcome).toMatchObject({ status: 'succeeded', accepted: 4, rejected: 1 });
    expect(outcome.rejectedRows[0]).toMatchObject({ line: 7, column: 'do_qc' });
    expect(outcome.notes.join(' ')).toContain('flagged 9 (missing)');
    expect(outcome.flagged).toEqual({ pass: 1, suspect: 1, fail: 1, 'not evaluated': 1 });
    // The run report says what set each flag: the file's flag column, or nothing for the row without one.
    expect(outcome.flaggedBy).toEqual({ pass: { source: 1 }, suspect: { source: 1 }, fail: { source: 1 }, 'not evaluated': { none: 1 } });
    // …and the run-report API (GET /api/ingest-runs/{id}) hands both out with the run.
    expect((await fetchIngestRun(outcome.runId)).report).toMatchObject({ flagged: outcome.flagged, flaggedBy: outcome.flaggedBy, dataVersion: 1 });
    const stored = await storedFlags(series.id);
    expect(stored.flag).toEqual([1, 3, 4, 2]);
    // 4 never enters the analysis; 3 does by default
    expect(Array.from((await loadObservations(series.id)).value)).toEqual([8.1, 8.2, 8.3]);
    await Series.update({ qc: { suspectInAnalysis: false } }, { where: { id: series.id } });
    expect(Array.from((await loadObservations(series.id)).value)).toEqual([8.1, 8.3]);
  });

  it('keeps the flags of pushed JSON points as a flag column does (same cases as the CSV above)', async () => {
    const series = await createSeries({ slug: 'sonde-do-push', name: 'Sonde DO (pushed)' }, null);
    const outcome = await ingestObservations({
      series,
      source: 'push',
      points: [
        { time: iso(0), value: 8.1, flag: 1 },
        { time: iso(1), value: 8.2, flag: '3' },
        { time: iso(2), value: 12.5, flag: 4 },
        { time: iso(3), value: null, flag: 9 },
        { time: iso(4), value: 8.3 },
        { time: iso(5), value: 8.4, flag: 7 },
        { time: iso(6), value: null },
      ],
    });
    expect(outcome).toMatchObject({ status: 'succeeded', accepted: 4, rejected: 2 });
    expect(outcome.rejectedRows.map((r) => [r.line, r.column])).toEqual([
      [6, 'flag'],
      [7, 'value'],
    ]);
    expect(outcome.notes.join(' ')).toContain('flagged 9 (missing)');
    expect(outcome.flagged).toEqual({ pass: 1, suspect: 1, fail: 1, 'not evaluated': 1 });
    expect((await storedFlags(series.id)).flag).toEqual([1, 3, 4, 2]);
    expect(Array.from((await loadObservations(series.id)).value)).toEqual([8.1, 8.2, 8.3]);
    // Points without any flag keep the former behaviour: no source flag at all.
    const plain = await ingestObservations({ series, source: 'push', points: [{ time: iso(7), value: 8.5 }] });
    expect(plain.flaggedBy).toEqual({ 'not evaluated': { none: 1 } });
  });

  it('flags a gross-range failure and a spike 4 and leaves them out of the analysis', async () => {
    const series = await createSeries(
      {
        slug: 'buoy-temp',
        name: 'Buoy temperature',
        intervalMs: HOUR,
        qc: { grossRange: { fail: [-5, 40], suspect: [0, 30] }, spike: { suspect: 2, fail: 4 } },
      },
      null,
    );
    const values = noise(40).map((x) => 15 + x * 0.2);
    values[10] = 99; // beyond the sensor's range
    values[20] = 25; // a spike of about 10 above both neighbours
    values[39] = 25; // a spike at the end: judged only when the next reading comes
    const text = `time,value\n${values.map((v, i) => `${iso(i)},${v}`).join('\n')}\n`;
    const outcome = await ingestObservations({ series, source: 'drop', csv: text });
    expect(outcome.status).toBe('succeeded');
    // The run report names the test behind each failure: the gross range test for 99, the spike test for the rest.
    expect(outcome.flaggedBy.fail['gross-range']).toBe(1);
    expect(outcome.flaggedBy.fail.spike).toBeGreaterThanOrEqual(1);
    for (const [label, bySetter] of Object.entries(outcome.flaggedBy)) {
      expect(Object.values(bySetter).reduce((a, b) => a + b, 0)).toBe(outcome.flagged[label]);
    }
    const stored = await storedFlags(series.id);
    expect(stored.flag[10]).toBe(4);
    expect(stored.flag[20]).toBe(4);
    // the spike test also marks the gross outlier's and the spike's neighbours (|xₙ − SPK_REF| ≈ 5 > 4 around 99,
    // ≈ 5 > 4 around 25); the first point has one neighbour only, the last is not evaluated until the next reading
    expect(stored.flag[9]).toBe(4);
    expect(stored.flag[19]).toBe(4);
    // the last point passed the gross range test; its spike test is not evaluated yet
    expect(stored.flag[39]).toBe(1);
    const analysed = await loadObservations(series.id);
    expect(Array.from(analysed.value)).not.toContain(99);
    expect(Array.from(analysed.value).filter((v) => v === 25)).toHaveLength(1);

    // the next reading lets the spike test judge the former last point
    await ingestObservations({ series, source: 'push', points: [{ time: iso(40), value: 15 }] });
    expect((await storedFlags(series.id)).flag[39]).toBe(4);
    expect(Array.from((await loadObservations(series.id)).value)).not.toContain(25);
  });

  it('judges the rate of change of a new reading against the stored period before it', async () => {
    const series = await createSeries(
      { slug: 'roc-buoy', name: 'Rate of change', intervalMs: HOUR, qc: { rateOfChange: { deviations: 3, periodHours: 6 } } },
      null,
    );
    const values = [10, 10.5, 10, 10.5, 10, 10.5, 10, 10.5, 10, 10.5];
    await ingestObservations({ series, source: 'drop', csv: `time,value\n${values.map((v, i) => `${iso(i)},${v}`).join('\n')}\n` });
    // hours 4-9 (the period of hour 10) hold 10, 10.5 three times each: SD 0.274, 3 SD = 0.82, so a step of 0.3 passes;
    // hours 5-10 give SD 0.319, 3 SD = 0.96, and a step of 5.3 is suspect (sample SDs worked by hand)
    await ingestObservations({ series, source: 'push', points: [{ time: iso(10), value: 10.8 }] });
    await ingestObservations({ series, source: 'push', points: [{ time: iso(11), value: 16.1 }] });
    const { flag } = await storedFlags(series.id);
    expect(flag.slice(10)).toEqual([1, 3]);
  });

  it('flags a stuck sensor and the stuck stretch gives no indicator values', async () => {
    const n = 900;
    const values = noise(n, 5).map((x, i) => 10 + x + 0.001 * i);
    for (let i = 300; i < 500; i++) values[i] = 10.25;
    const series = await createSeries(
      {
        slug: 'stuck-logger',
        name: 'Stuck logger',
        intervalMs: HOUR,
        qc: { flatLine: { tolerance: 0, suspect: 3, fail: 5 } },
      },
      null,
    );
    await ingestObservations({ series, source: 'drop', csv: `time,value\n${values.map((v, i) => `${iso(i)},${v}`).join('\n')}\n` });
    const stored = await storedFlags(series.id);
    expect(stored.flag.slice(300, 306)).toEqual([1, 1, 1, 3, 3, 4]);
    expect(stored.flag.slice(305, 500).every((f) => f === 4)).toBe(true);
    const { time, value } = await loadObservations(series.id);
    expect(time.length).toBe(n - 195);
    const settings = analysisSettingsSchema.parse({ window: 0.5, bandwidth: 0.1, surrogates: 0, shiftDetection: 'off', gapPolicy: 'latest-stretch' });
    const result = await runAnalysis({ time, value, intervalMs: HOUR }, settings, { parallel: false });
    expect(result.stretch.from).toBeGreaterThan(T0 + 499 * HOUR);
    const stuckFrom = T0 + 305 * HOUR;
    const stuckTo = T0 + 499 * HOUR;
    for (const values of Object.values(result.indicators)) {
      values!.forEach((v, i) => {
        const t = result.series.time[i];
        if (t >= stuckFrom && t <= stuckTo) expect(v).toBeNull();
      });
    }
  });
});

describe('re-running the tests and overriding flags', () => {
  it('judges history stored before the tests were set, keeps an analyst override, and audits both', async () => {
    const series = await createSeries({ slug: 'old-record', name: 'Old record' }, null);
    const values = [1, 1, 1, 50, 1, 1, 1];
    await ingestObservations({ series, source: 'drop', csv: `time,value\n${values.map((v, i) => `${iso(i)},${v}`).join('\n')}\n` });
    expect((await storedFlags(series.id)).flag).toEqual([2, 2, 2, 2, 2, 2, 2]);
    const analyst = await User.create({ email: 'analyst@example.test', name: 'Analyst', role: 'analyst', passwordHash: 'not-used', active: true });
    await overrideFlags(series, { from: T0 + 5 * HOUR, to: T0 + 5 * HOUR, flag: 3, reason: 'diver disturbed the sonde' }, analyst);
    await Series.update({ qc: { grossRange: { fail: [0, 40] } } }, { where: { id: series.id } });
    const rerun = await rerunQuality((await Series.findByPk(series.id))!, null);
    expect(rerun).toMatchObject({ points: 7, changed: 6 });
    expect((await storedFlags(series.id)).flag).toEqual([1, 1, 1, 4, 1, 3, 1]);
    const audit = await AuditEntry.findAll({ where: { entity: 'series', entityId: String(series.id) }, order: [['id', 'ASC']] });
    expect(audit.map((a) => a.action)).toEqual(expect.arrayContaining(['quality.override', 'quality.rerun']));
    expect(audit.find((a) => a.action === 'quality.override')!.details).toMatchObject({ reason: 'diver disturbed the sonde', flag: 3, changed: 1 });
  });
});
