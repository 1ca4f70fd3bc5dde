import { describe, expect, it } from 'vitest';
import { formatLocal, formatP, formatTau, formatUtc, formatValue } from '@/lib/display/format';
import { SPARK_POINTS, sparkline, sparkPath } from '@/lib/display/sparkline';
import { calendarTicks } from '@/lib/display/time-ticks';
import { healthNotices } from '@/lib/display/health-notices';
import type { HealthReport } from '@/lib/runtime/health';

describe('display formats', () => {
  it('shows instants in the series time zone across a summer-time change', () => {
    // EU summer time starts on the last Sunday of March at 01:00 UTC (Directive 2000/84/EC, Art. 2); the IANA
    // zone Europe/Oslo follows it: 2025-03-30 00:30 UTC is 01:30 CET, 01:30 UTC is 03:30 CEST.
    expect(formatLocal(Date.UTC(2025, 2, 30, 0, 30), 'Europe/Oslo')).toBe('2025-03-30 01:30 Europe/Oslo');
    expect(formatLocal(Date.UTC(2025, 2, 30, 1, 30), 'Europe/Oslo')).toBe('2025-03-30 03:30 Europe/Oslo');
    expect(formatLocal(Date.UTC(2025, 2, 30, 1, 30), 'Not/AZone')).toBe('2025-03-30 01:30 UTC');
    expect(formatUtc(Date.UTC(2025, 2, 30, 1, 30))).toBe('2025-03-30 01:30 UTC');
  });

  it('rounds tau to 2 decimals and p to 3 significant figures (our display rule)', () => {
    expect(formatTau(0.456)).toBe('0.46');
    expect(formatTau(null)).toBe('–');
    expect(formatP(0.012345)).toBe('0.0123');
    expect(formatP(0.0004)).toBe('< 0.001');
    expect(formatValue(1234.567, '°C')).toBe('1235 °C');
    expect(formatValue(0.00001234)).toBe('1.234e-5');
    // an axis tick such as 2.7e-5 reads like 0.25 does in the fixed-point form, without padding zeros
    expect([formatValue(0.000027), formatValue(3e6), formatValue(0.00002), formatValue(1.05e-4)]).toEqual(['2.7e-5', '3e+6', '2e-5', '1.05e-4']);
  });
});

describe('overview sparklines', () => {
  // Path syntax and the coordinate system (y grows downwards) from W3C SVG 1.1, §8.3 "Path data"; the scaling is
  // the usual min–max mapping of a sparkline (common practice). Expected strings worked by hand for a 96 × 28 box
  // with a 2 px inset: x step 92/3, y scale 24 per unit.
  it('maps the smallest value to the bottom and the largest to the top, and breaks the line at a gap', () => {
    expect(sparkPath([0, 1, null, 0.5])).toBe('M2.0 26.0L32.7 2.0M94.0 14.0');
  });
  it('draws a flat curve at mid-height and nothing for a curve with no values', () => {
    expect(sparkPath([3, 3])).toBe('M2.0 14.0L94.0 14.0');
    expect(sparkPath([null, null])).toBe('');
    expect(sparkPath([])).toBe('');
  });
  it('thins a long curve to SPARK_POINTS, keeping the first and last value', () => {
    const curve = Array.from({ length: 1000 }, (_, i) => i);
    const thin = sparkline(curve);
    expect(thin).toHaveLength(SPARK_POINTS);
    expect([thin[0], thin[SPARK_POINTS - 1]]).toEqual([0, 999]);
  });
});

describe('service notices from the health report', () => {
  // Our own rule (README, "Operating Brinkwatch"): a stopped scheduler or undeliverable mail is said on every screen.
  const NOW = Date.UTC(2026, 11, 2, 7, 0);
  const healthy: HealthReport = {
    ok: true,
    db: { ok: true, dialect: 'sqlite' },
    scheduler: { ok: true, lastBeatAt: new Date(NOW - 10_000).toISOString(), holder: 'host:1' },
    mail: { ok: true, transport: 'smtp', pending: 3, failed: 0 },
  };
  it('says nothing when every part is well', () => {
    expect(healthNotices(healthy, NOW)).toEqual([]);
  });
  it('names when a stopped scheduler last reported and what has stopped with it', () => {
    const stopped = { ...healthy, scheduler: { ok: false, lastBeatAt: new Date(NOW - 3 * 3_600_000).toISOString(), holder: null } };
    const [notice] = healthNotices(stopped, NOW);
    expect(notice.key).toBe('scheduler');
    expect(notice.text).toContain('last reported at 2026-12-02 04:00 UTC (3 h ago)');
    expect(notice.text).toContain('no alerts or mail go out');
    expect(healthNotices({ ...stopped, scheduler: { ok: false, lastBeatAt: null, holder: null } }, NOW)[0].text).toContain('has not reported at all');
  });
  it('counts undelivered mail, and says only that the database is gone when it is', () => {
    expect(healthNotices({ ...healthy, mail: { ...healthy.mail, ok: false, failed: 2 } }, NOW).map((n) => n.text)).toEqual([
      '2 messages could not be delivered after every retry; an admin can send them again under Admin › Outbox and mailbox.',
    ]);
    const down = {
      ok: false,
      db: { ok: false, dialect: 'sqlite' as const, error: 'x' },
      scheduler: { ok: false, lastBeatAt: null, holder: null },
      mail: { ok: false, transport: 'smtp' as const, pending: 0, failed: 0 },
    };
    expect(healthNotices(down, NOW).map((n) => n.key)).toEqual(['db']);
  });
});

describe('time-axis ticks on calendar boundaries', () => {
  // Dates on the proleptic Gregorian calendar of ISO 8601; zone offsets from the IANA time zone database
  // (Europe/Oslo: UTC+1 in winter, UTC+2 from 01:00 UTC on the last Sunday of March, the EU summer-time rule).
  // The expected ticks are worked by hand from those two facts.
  const utc = (...parts: [number, number, number, number?]) => Date.UTC(parts[0], parts[1] - 1, parts[2], parts[3] ?? 0);
  it('puts an eight-year daily record on every second New Year, in UTC and in the series zone', () => {
    const from = utc(2018, 11, 21);
    const to = utc(2026, 12, 2);
    expect(calendarTicks(from, to, 'UTC')).toEqual([2020, 2022, 2024, 2026].map((y) => ({ t: utc(y, 1, 1), label: String(y) })));
    expect(calendarTicks(from, to, 'Europe/Oslo').map((tick) => tick.t)).toEqual([2020, 2022, 2024, 2026].map((y) => utc(y - 1, 12, 31, 23)));
  });
  it('uses months for half a year, quarters beyond, and local clock hours across a spring-forward change', () => {
    expect(calendarTicks(utc(2023, 1, 15), utc(2023, 6, 20), 'UTC').map((tick) => tick.label)).toEqual(['2023-02', '2023-03', '2023-04', '2023-05', '2023-06']);
    expect(calendarTicks(utc(2023, 1, 15), utc(2023, 12, 20), 'UTC').map((tick) => tick.label)).toEqual(['2023-04', '2023-07', '2023-10']);
    // 2023-03-26 in Oslo: 00:00 CET (23:00 UTC the day before) to 12:00 CEST (10:00 UTC); 02:00–03:00 never happened
    const ticks = calendarTicks(utc(2023, 3, 25, 23), utc(2023, 3, 26, 10), 'Europe/Oslo');
    expect(ticks.map((tick) => tick.label)).toEqual(['03-26 00:00', '03-26 03:00', '03-26 06:00', '03-26 09:00', '03-26 12:00']);
    expect(ticks.map((tick) => tick.t)).toEqual([utc(2023, 3, 25, 23), utc(2023, 3, 26, 1), utc(2023, 3, 26, 4), utc(2023, 3, 26, 7), utc(2023, 3, 26, 10)]);
  });
  it('puts weekly ticks on Mondays (ISO 8601 weeks) and gives deep-time records round years', () => {
    // 2024-01-01 was a Monday (ISO week 2024-W01-1); fortnights are counted from Monday 1970-01-05, so every
    // second Monday from 2024-01-08 (19,726 days later, 1,409 fortnights)
    expect(calendarTicks(utc(2024, 1, 1), utc(2024, 1, 31), 'UTC').map((tick) => tick.label)).toEqual([
      '2024-01-01',
      '2024-01-08',
      '2024-01-15',
      '2024-01-22',
      '2024-01-29',
    ]);
    expect(calendarTicks(utc(2023, 12, 1), utc(2024, 2, 20), 'UTC').map((tick) => tick.label)).toEqual([
      '2023-12-11',
      '2023-12-25',
      '2024-01-08',
      '2024-01-22',
      '2024-02-05',
      '2024-02-19',
    ]);
    const deep = calendarTicks(-798_050 * 365.2425 * 86_400_000, utc(1950, 1, 1), 'Europe/Oslo');
    expect(deep.map((tick) => tick.label)).toEqual(['-600000', '-400000', '-200000', '0']);
  });
});
