import { describe, expect, it } from 'vitest';
import { civilFromDays, daysFromCivil, decimalYearToMs, formatInstant, guessTimeFormat, parseInstantParam, parseTime } from '@/lib/intake/time-formats';

const ok = (raw: string, format: Parameters<typeof parseTime>[1], zone = 'UTC') => {
  const r = parseTime(raw, format, zone);
  if (!r.ok) throw new Error(r.reason);
  return r.t;
};

describe('ISO 8601 / RFC 3339', () => {
  it('reads the RFC 3339 §5.8 examples', () => {
    // RFC 3339 §5.8: "1985-04-12T23:20:50.52Z", "1996-12-19T16:39:57-08:00" (= 1996-12-20T00:39:57Z), "1990-12-31T23:59:60Z" (leap second).
    expect(formatInstant(ok('1985-04-12T23:20:50.52Z', 'iso8601'))).toBe('1985-04-12T23:20:50.520Z');
    expect(formatInstant(ok('1996-12-19T16:39:57-08:00', 'iso8601'))).toBe('1996-12-20T00:39:57.000Z');
    const leap = parseTime('1990-12-31T23:59:60Z', 'iso8601', 'UTC');
    expect(leap.ok).toBe(false);
    expect(!leap.ok && leap.reason).toContain('leap second');
  });

  it('agrees with ECMAScript Date.parse on the date-time forms both accept (ECMA-262 §21.4.3.2)', () => {
    for (const text of ['2024-02-29T12:34:56Z', '2024-02-29T12:34:56.789+05:30', '1969-07-20T20:17:40Z', '2000-01-01T00:00:00-00:00']) {
      expect(ok(text, 'iso8601')).toBe(Date.parse(text));
    }
  });

  it('accepts a space for T (RFC 3339 §5.6 note), basic offsets (+0100) and 24:00 end of day (ISO 8601-1:2019 §5.3.2)', () => {
    expect(ok('2024-01-01 06:00:00Z', 'iso8601')).toBe(Date.UTC(2024, 0, 1, 6));
    expect(ok('2024-01-01T06:00:00+0100', 'iso8601')).toBe(Date.UTC(2024, 0, 1, 5));
    expect(ok('2024-01-01T24:00:00Z', 'iso8601')).toBe(Date.UTC(2024, 0, 2));
  });

  it('refuses impossible calendar dates: Gregorian leap rule (divisible by 4, except centuries not divisible by 400)', () => {
    expect(parseTime('2023-02-29', 'iso8601', 'UTC').ok).toBe(false);
    expect(parseTime('1900-02-29', 'iso8601', 'UTC').ok).toBe(false);
    expect(parseTime('2000-02-29', 'iso8601', 'UTC').ok).toBe(true);
    expect(parseTime('2023-04-31', 'date', 'UTC').ok).toBe(false);
    expect(parseTime('2023-01-01T12:60:00Z', 'iso8601', 'UTC').ok).toBe(false);
  });

  it('reads a date alone as 00:00 UTC of that day, whatever the series zone', () => {
    expect(ok('2023-06-15', 'date', 'Europe/Oslo')).toBe(Date.UTC(2023, 5, 15));
  });
});

describe('local times in the series zone (IANA tz database via Intl)', () => {
  // EU summer time runs from 01:00 UTC on the last Sunday of March to 01:00 UTC on the last Sunday of October
  // (Directive 2000/84/EC); New York follows US rules (second Sunday of March to first Sunday of November).
  it('applies the offset in force', () => {
    expect(ok('2023-07-01T12:00:00', 'iso8601', 'Europe/Oslo')).toBe(Date.UTC(2023, 6, 1, 10));
    expect(ok('2023-01-15T12:00:00', 'iso8601', 'Europe/Oslo')).toBe(Date.UTC(2023, 0, 15, 11));
    expect(ok('2023-07-01T12:00:00', 'iso8601', 'America/New_York')).toBe(Date.UTC(2023, 6, 1, 16));
  });

  it('takes the earlier instant in the repeated hour and refuses a time inside the skipped hour', () => {
    expect(ok('2023-10-29T02:30:00', 'iso8601', 'Europe/Oslo')).toBe(Date.UTC(2023, 9, 29, 0, 30));
    expect(ok('2023-11-05T01:30:00', 'iso8601', 'America/New_York')).toBe(Date.UTC(2023, 10, 5, 5, 30));
    const gap = parseTime('2023-03-26T02:30:00', 'iso8601', 'Europe/Oslo');
    expect(gap.ok).toBe(false);
  });
});

describe('numeric time formats', () => {
  it('epoch seconds and milliseconds (POSIX time: 1e9 s = 2001-09-09T01:46:40Z, a well-known epoch fact)', () => {
    expect(formatInstant(ok('1000000000', 'epoch-seconds'))).toBe('2001-09-09T01:46:40.000Z');
    expect(formatInstant(ok('1000000000000', 'epoch-milliseconds'))).toBe('2001-09-09T01:46:40.000Z');
    expect(ok('0', 'epoch-seconds')).toBe(0);
    expect(ok('-86400.5', 'epoch-seconds')).toBe(-86_400_500);
  });

  it('decimal years: fraction of that calendar year (common practice)', () => {
    expect(formatInstant(decimalYearToMs(2000.5))).toBe('2000-07-02T00:00:00.000Z'); // 183 of 366 days
    expect(formatInstant(decimalYearToMs(2001.5))).toBe('2001-07-02T12:00:00.000Z'); // 182.5 of 365 days
    expect(formatInstant(ok('1987.0', 'decimal-year'))).toBe('1987-01-01T00:00:00.000Z');
  });

  it('ages before present count back from 1950 (radiocarbon convention, Stuiver & Polach 1977)', () => {
    expect(formatInstant(ok('0', 'age-years-bp'))).toBe('1950-01-01T00:00:00.000Z');
    expect(formatInstant(ok('50', 'age-years-bp'))).toBe('1900-01-01T00:00:00.000Z');
    expect(formatInstant(ok('-50', 'age-years-bp'))).toBe('2000-01-01T00:00:00.000Z');
    expect(formatInstant(ok('11.7', 'age-kyr-bp'))).toBe('-009750-01-01T00:00:00.000Z');
    expect(ok('1', 'age-kyr-bp')).toBeLessThan(ok('0.5', 'age-kyr-bp'));
  });

  it('refuses text where a number is expected', () => {
    expect(parseTime('12abc', 'epoch-seconds', 'UTC').ok).toBe(false);
    expect(parseTime('', 'decimal-year', 'UTC').ok).toBe(false);
  });
});

describe('calendar arithmetic', () => {
  it('matches Date.UTC across its range and round-trips (Hinnant days_from_civil / civil_from_days)', () => {
    for (const [y, m, d] of [
      [1970, 1, 1],
      [2000, 2, 29],
      [1600, 3, 1],
      [1, 1, 1],
      [2400, 12, 31],
      [-44, 3, 15],
    ]) {
      const days = daysFromCivil(y, m, d);
      const reference = new Date(0);
      reference.setUTCFullYear(y, m - 1, d);
      expect(days * 86_400_000).toBe(reference.getTime());
      expect(civilFromDays(days)).toEqual([y, m, d]);
    }
  });

  it('formats like Date.prototype.toISOString inside 0000–9999 (ECMA-262 §21.4.1.32)', () => {
    for (const t of [0, 1_700_000_000_123, -1, -62_135_596_800_000, 253_402_300_799_999]) expect(formatInstant(t)).toBe(new Date(t).toISOString());
  });
});

describe('guessing and query instants', () => {
  it('guesses the format of a sample column', () => {
    expect(guessTimeFormat(['2024-01-01T00:00:00Z', '2024-01-02T00:00:00Z'])).toBe('iso8601');
    expect(guessTimeFormat(['2024-01-01', '2024-01-02'])).toBe('date');
    expect(guessTimeFormat(['1700000000', '1700003600'])).toBe('epoch-seconds');
    expect(guessTimeFormat(['1700000000000'])).toBe('epoch-milliseconds');
    expect(guessTimeFormat(['1987.5', '1988.0'])).toBe('decimal-year');
    expect(guessTimeFormat(['0.5', '1.5', '12'])).toBe('age-kyr-bp');
    expect(guessTimeFormat(['abc'])).toBeNull();
  });

  it('reads from/to as epoch ms or ISO 8601', () => {
    expect(parseInstantParam('1700000000000', 'UTC')).toEqual({ ok: true, t: 1_700_000_000_000 });
    expect(parseInstantParam('2023-11-14T22:13:20Z', 'UTC')).toMatchObject({ ok: true, t: 1_700_000_000_000 });
  });
});
