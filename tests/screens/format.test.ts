import { describe, expect, it } from 'vitest';
import { formatLocal, formatP, formatTau, formatUtc, formatValue } from '@/lib/display/format';

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
