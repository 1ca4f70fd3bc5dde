import { beforeEach, describe, expect, it, vi } from 'vitest';
import { runAnalysis } from '@/lib/engine/analyze';
import { extentPoints, MONTH_MS, parseExtent, YEAR_MS } from '@/lib/engine/extent';
import { RandomStream } from '@/lib/engine/random';
import { analysisSettingsSchema } from '@/lib/engine/settings';

// The shift detector has its own checks (tests of lib/engine/shifts.ts); here it is replaced by a stand-in that
// reports what each test sets, so the stretch logic is checked on its own.
const detected = vi.hoisted(() => ({ shifts: [] as { index: number; size: number }[], calls: 0 }));
vi.mock('@/lib/engine/shifts', () => ({
  detectShifts: () => {
    detected.calls++;
    return detected.shifts;
  },
}));

const DAY = 86_400_000;
const t0 = Date.UTC(2020, 0, 1);
const n = 300;
const rng = new RandomStream(5, 0);
const value = Float64Array.from({ length: n }, () => rng.normal());
const time = Float64Array.from({ length: n }, (_, i) => t0 + i * DAY);
const settings = analysisSettingsSchema.parse({ indicators: ['variance', 'ac1'], window: 0.5 });

beforeEach(() => {
  detected.shifts = [];
  detected.calls = 0;
});

describe('the analysed stretch', () => {
  it('starts at the first point of the new level after the last detected shift', async () => {
    detected.shifts = [
      { index: 60, size: 2 },
      { index: 120, size: -1 },
    ];
    const r = await runAnalysis({ time, value }, settings);
    expect(r.shifts).toEqual([
      { time: time[60], index: 60, size: 2 },
      { time: time[120], index: 120, size: -1 },
    ]);
    expect(r.stretch).toEqual({ from: time[120], to: time[n - 1], startsAfter: 'shift' });
    expect(r.n).toBe(180);
    expect(r.windowPoints).toBe(90);
  });

  it('starts at the first grid point at or after the latest break; the later of break and shift wins', async () => {
    detected.shifts = [{ index: 100, size: 1 }];
    const later = await runAnalysis(
      {
        time,
        value,
        breaks: [
          { time: t0 + 150.5 * DAY, kind: 'maintenance' },
          { time: t0 + 40 * DAY, kind: 'tipping-point' },
        ],
      },
      settings,
    );
    expect(later.stretch).toEqual({ from: time[151], to: time[n - 1], startsAfter: 'maintenance' });
    const earlier = await runAnalysis({ time, value, breaks: [{ time: t0 + 80 * DAY, kind: 'tipping-point' }] }, settings);
    expect(earlier.stretch.startsAfter).toBe('shift');
    detected.shifts = [];
    const before = await runAnalysis({ time, value, breaks: [{ time: t0 - DAY, kind: 'tipping-point' }] }, settings);
    expect(before.stretch).toEqual({ from: time[0], to: time[n - 1], startsAfter: 'record-start' });
  });

  it('shifts are found on the whole prepared record; a span cut after the last shift names the span', async () => {
    detected.shifts = [{ index: 50, size: 1 }];
    const r = await runAnalysis({ time, value }, { ...settings, span: 'P200D' });
    expect(r.shifts).toEqual([{ time: time[150], index: 50, size: 1 }]);
    expect(r.stretch).toEqual({ from: time[150], to: time[n - 1], startsAfter: 'shift' });
    detected.shifts = [];
    const s = await runAnalysis({ time, value }, { ...settings, span: '100 points' });
    expect(s.stretch).toEqual({ from: time[200], to: time[n - 1], startsAfter: 'span' });
  });

  it("a long gap under 'latest-stretch' names the gap; shift detection 'off' does not run the detector", async () => {
    const gappy = value.slice();
    gappy.fill(Number.NaN, 100, 110);
    const r = await runAnalysis({ time, value: gappy }, { ...settings, gapPolicy: 'latest-stretch', shiftDetection: 'off' });
    expect(r.stretch).toEqual({ from: time[110], to: time[n - 1], startsAfter: 'gap' });
    expect(r.shifts).toEqual([]);
    expect(detected.calls).toBe(0);
  });

  it('a stretch too short for the window says where it starts and why', async () => {
    detected.shifts = [{ index: 290, size: 3 }];
    await expect(runAnalysis({ time, value }, settings)).rejects.toThrow(
      'rolling window 0.5 × 10 points = 5 points; at least 8 are needed (use a longer series or a wider window); the stretch from 2020-10-17T00:00:00.000Z to 2020-10-26T00:00:00.000Z (10 points) starts after the detected abrupt shift',
    );
  });

  it('window and bandwidth as durations and points are taken on the stretch', async () => {
    const r = await runAnalysis({ time, value }, { ...settings, window: 'P60D', bandwidth: '15 points', detrend: 'local-linear' });
    expect(r.windowPoints).toBe(60);
    expect(r.bandwidthPoints).toBe(15);
  });
});

// ISO 8601-1:2019, Sec. 5.5.2 (durations: PnYnMnWnDTnHnMnS); fixed lengths of the mean Gregorian year and month
// (365.2425 d, 30.436875 d) are our documented choice.
describe('extents', () => {
  it('reads fractions, points and ISO 8601 durations', () => {
    expect(parseExtent(0.25)).toEqual({ kind: 'fraction', value: 0.25 });
    for (const p of ['12 points', '12 point', '12pts', ' 12 Points ']) expect(parseExtent(p)).toEqual({ kind: 'points', value: 12 });
    expect(parseExtent('P90D')).toEqual({ kind: 'duration', ms: 90 * DAY });
    expect(parseExtent('PT12H')).toEqual({ kind: 'duration', ms: 12 * 3_600_000 });
    expect(parseExtent('P2W')).toEqual({ kind: 'duration', ms: 14 * DAY });
    expect(parseExtent('P1Y6M')).toEqual({ kind: 'duration', ms: YEAR_MS + 6 * MONTH_MS });
    expect(parseExtent('P0,5D')).toEqual({ kind: 'duration', ms: DAY / 2 });
    expect(YEAR_MS).toBe(365.2425 * DAY);
    expect(MONTH_MS).toBe(30.436875 * DAY);
    for (const bad of ['P', 'PT', 'P1H', '90D', 'P0D', '0 points', -0.1, 'ninety days']) expect(() => parseExtent(bad), String(bad)).toThrow();
  });

  it('converts to points on the stretch and its sampling interval', () => {
    expect(extentPoints(0.1, 300, DAY, 'utc-ms')).toBeCloseTo(30, 12);
    expect(extentPoints('P2Y', 10_000, DAY, 'utc-ms')).toBeCloseTo(730.485, 9);
    expect(extentPoints('PT12H', 100, 3_600_000, 'utc-ms')).toBe(12);
    expect(() => extentPoints('P90D', 100, 1, 'numeric')).toThrow('needs calendar timestamps');
  });
});
