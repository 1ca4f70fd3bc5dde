import { describe, expect, it } from 'vitest';
import { formatLocal, formatP, formatTau, formatUtc, formatValue } from '@/lib/display/format';
import { SPARK_POINTS, sparkline, sparkPath } from '@/lib/display/sparkline';

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
