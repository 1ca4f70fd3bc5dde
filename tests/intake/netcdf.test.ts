import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { NetcdfAttribute, NetcdfType, NetcdfVariable } from '@/lib/intake/netcdf/dataset';
import { NetcdfFileError } from '@/lib/intake/netcdf/errors';
import { qartodFlagTable } from '@/lib/intake/netcdf/flags';
import { netcdfFormatOf } from '@/lib/intake/netcdf/format';
import { decodeTimes, parseTimeUnits } from '@/lib/intake/netcdf/time';
import { missingOf, readingsOf } from '@/lib/intake/netcdf/values';
import { formatInstant } from '@/lib/intake/time-formats';

const DIR = path.resolve(__dirname, '../../fixtures/netcdf');

function decode(units: string, calendar: string | null, values: number[]) {
  return decodeTimes(Float64Array.from(values), parseTimeUnits(units, calendar, 'time'), () => false);
}

function fileError(run: () => unknown): NetcdfFileError {
  try {
    run();
  } catch (error) {
    if (error instanceof NetcdfFileError) return error;
    throw error;
  }
  throw new Error('expected a NetcdfFileError');
}

/** A variable built by hand, for the attribute rules. */
function variable(name: string, type: NetcdfType, attributes: Record<string, NetcdfAttribute>): NetcdfVariable {
  return { name, type, dimensions: ['time'], shape: [0], attributes: new Map(Object.entries(attributes)), read: () => new Float64Array(0) };
}
const text = (value: string): NetcdfAttribute => ({ type: 'text', text: value });
const numbers = (type: NetcdfType, ...values: number[]): NetcdfAttribute => ({ type, numbers: values });

describe('CF time coordinates (fixtures/netcdf/times.json, decoded by cftime through fixtures/netcdf/make.py)', () => {
  const { cases } = JSON.parse(fs.readFileSync(path.join(DIR, 'times.json'), 'utf8')) as {
    cases: { units: string; calendar: string; values: number[]; utc: string[] }[];
  };
  for (const { units, calendar, values, utc } of cases) {
    it(`${units} (${calendar})`, () => {
      // CF 1.x §4.4 (units: day/d, hour/hr/h, minute/min, second/sec/s, plurals) and §4.4.1 (calendars).
      const { t, problems } = decode(units, calendar, values);
      expect(problems.size).toBe(0);
      expect(Array.from(t, formatInstant)).toEqual(utc);
    });
  }

  it('reads a zone offset after the reference time as that time zone (UDUNITS-2 timestamps, the CF 1.x §4.4 example "-6:00")', () => {
    // By hand: 15:15:42.5 at UTC−6 is 21:15:42.5 UTC. cftime ignores such offsets (its num2date documentation), so
    // this case is not in times.json.
    const { t } = decode('seconds since 1992-10-8 15:15:42.5 -6:00', null, [0, 60]);
    expect(Array.from(t, formatInstant)).toEqual(['1992-10-08T21:15:42.500Z', '1992-10-08T21:16:42.500Z']);
    expect(formatInstant(decode('hours since 2000-01-01 00:00 +0130', null, [0]).t[0])).toBe('1999-12-31T22:30:00.000Z');
  });

  it('takes a missing calendar attribute as standard (CF 1.x §4.4.1: the default)', () => {
    expect(formatInstant(decode('days since 1500-01-01', null, [0]).t[0])).toBe(formatInstant(decode('days since 1500-01-01', 'julian', [0]).t[0]));
    expect(formatInstant(decode('days since 1500-01-01', 'GREGORIAN', [0]).t[0])).toBe('1500-01-10T00:00:00.000Z');
  });

  it('rejects the reading, not the file, for 29 February of a common year in the all_leap calendar (CF 1.x §4.4.1: no such real date)', () => {
    // By hand: day 59 after 2001-01-01 in a 366-day year is 2001-02-29.
    const { t, problems } = decode('days since 2001-01-01', 'all_leap', [58, 59, 60]);
    expect(Number.isNaN(t[1])).toBe(true);
    expect(problems.get(1)).toContain('2001-02-29');
    expect(formatInstant(t[2])).toBe('2001-03-01T00:00:00.000Z');
  });

  it('marks fill values of the time variable as rows without a time', () => {
    const { problems } = decodeTimes(Float64Array.from([0, 9.969209968386869e36]), parseTimeUnits('days since 2000-01-01', null, 'time'), (i) => i === 1);
    expect(problems.get(1)).toContain('missing');
  });

  it('rounds to the nearest millisecond (instants are stored in whole ms)', () => {
    expect(decode('days since 2000-01-01', null, [1 / 3]).t[0] % 1).toBe(0);
    expect(formatInstant(decode('seconds since 2000-01-01', null, [0.0004, 0.0006]).t[1])).toBe('2000-01-01T00:00:00.001Z');
  });

  it('refuses calendars it cannot map to real instants, naming them (CF 1.x §4.4.1 lists 360_day, none; CF 1.11 utc, tai)', () => {
    for (const calendar of ['360_day', 'none', 'utc', 'tai', 'martian']) {
      const error = fileError(() => parseTimeUnits('days since 2000-01-01', calendar, 'time'));
      expect(error.code).toBe('unsupported-calendar');
      expect(error.message).toContain(`"${calendar}"`);
    }
  });

  it('refuses months, years, unknown units and units without a reference date (CF 1.x §4.4)', () => {
    for (const units of ['months since 2000-01-01', 'years since 1950-01-01', 'fortnights since 2000-01-01', 'days', 'days since yesterday']) {
      expect(fileError(() => parseTimeUnits(units, null, 'time')).code, units).toBe('unsupported-units');
    }
    expect(fileError(() => parseTimeUnits('months since 2000-01-01', null, 'time')).message).toContain('months');
  });

  it('refuses reference dates that do not exist in their calendar', () => {
    // CF 1.x §4.4.1: the standard calendar skips 1582-10-05 to 1582-10-14; 1900 is not a Gregorian leap year, but a Julian one.
    expect(fileError(() => decode('days since 1582-10-10', 'standard', [0])).code).toBe('unsupported-units');
    expect(fileError(() => decode('days since 1900-02-29', 'proleptic_gregorian', [0])).code).toBe('unsupported-units');
    expect(formatInstant(decode('days since 1900-02-29', 'julian', [0]).t[0])).toBe('1900-03-13T00:00:00.000Z');
    expect(fileError(() => decode('days since 2001-02-29', 'noleap', [0])).code).toBe('unsupported-units');
  });
});

describe('missing data and packing', () => {
  it('masks _FillValue, missing_value and NaN (CF 1.x §2.5.1)', () => {
    const v = variable('temp', 'double', { _FillValue: numbers('double', -999), missing_value: numbers('double', -99, -98) });
    const { values, count } = readingsOf(v, Float64Array.from([1, -999, -99, -98, Number.NaN, 2]));
    expect(count).toBe(4);
    expect(Array.from(values).map((x) => (Number.isNaN(x) ? null : x))).toEqual([1, null, null, null, null, 2]);
  });

  it("masks the netCDF library's default fill without a _FillValue, except for bytes (netcdf.h NC_FILL_*; NUG on byte fill)", () => {
    expect(missingOf(variable('x', 'float', {})).test(Math.fround(9.969209968386869e36))).toBe(true);
    expect(missingOf(variable('x', 'int', {})).test(-2147483647)).toBe(true);
    expect(missingOf(variable('x', 'short', {})).test(-32767)).toBe(true);
    expect(missingOf(variable('x', 'byte', {})).test(-127)).toBe(false);
  });

  it('applies scale_factor and add_offset to packed values (CF 1.x §8.1: unpacked = packed × scale_factor + add_offset)', () => {
    const v = variable('sal', 'short', { scale_factor: numbers('double', 0.001), add_offset: numbers('double', 35), _FillValue: numbers('short', -32767) });
    const { values } = readingsOf(v, Float64Array.from([100, -450, -32767]));
    expect(values[0]).toBe(100 * 0.001 + 35);
    expect(values[1]).toBe(-450 * 0.001 + 35);
    expect(Number.isNaN(values[2])).toBe(true);
  });

  it('compares valid_range with packed values, or with unpacked ones when it has the type of scale_factor (CF 1.x §8.1; NUG)', () => {
    const packed = variable('o2', 'short', { scale_factor: numbers('double', 0.01), valid_range: numbers('short', 0, 5000) });
    expect(readingsOf(packed, Float64Array.from([812, 9000, -1])).count).toBe(2);
    const unpacked = variable('o2', 'short', { scale_factor: numbers('double', 0.01), valid_range: numbers('double', 0, 50) });
    expect(readingsOf(unpacked, Float64Array.from([812, 5001, -1])).count).toBe(2);
    const bounded = variable('x', 'double', { valid_min: numbers('double', 0) });
    expect(readingsOf(bounded, Float64Array.from([-0.5, 0, 3])).count).toBe(1);
  });
});

describe('QC flag variables (CF 1.x §3.5 flag_values/flag_meanings; QARTOD primary flags 1, 2, 3, 4, 9)', () => {
  it('maps QARTOD meanings whatever the values', () => {
    const table = qartodFlagTable(
      variable('qc', 'ubyte', { flag_values: numbers('ubyte', 0, 1, 2, 3, 4), flag_meanings: text('not_evaluated pass suspect fail missing_data') }),
    );
    expect([0, 1, 2, 3, 4, 5].map((raw) => table.flagOf(raw))).toEqual([2, 1, 3, 4, 9, null]);
  });

  it('reads the QARTOD manual names in either case and spelling of "suspect or of high interest"', () => {
    const table = qartodFlagTable(
      variable('qc', 'byte', {
        flag_values: numbers('byte', 1, 2, 3, 4, 9),
        flag_meanings: text('PASS NOT_EVALUATED SUSPECT_OR_OF_HIGH_INTEREST FAIL MISSING'),
      }),
    );
    expect([1, 2, 3, 4, 9].map((raw) => table.flagOf(raw))).toEqual([1, 2, 3, 4, 9]);
  });

  it("reads QARTOD's numbers by value when the meanings are other words that do not contradict them", () => {
    const table = qartodFlagTable(variable('qc', 'byte', { flag_values: numbers('byte', 1, 3, 4, 9), flag_meanings: text('good questionable bad gap') }));
    expect(table.flagOf(4)).toBe(4);
    expect(table.flagOf(2)).toBeNull();
  });

  it('goes by the meanings when all are QARTOD names, even against the numbers', () => {
    const table = qartodFlagTable(variable('qc', 'byte', { flag_values: numbers('byte', 1, 4), flag_meanings: text('fail pass') }));
    expect([1, 4].map((raw) => table.flagOf(raw))).toEqual([4, 1]);
  });

  it('reads a flag variable without flag_values as QARTOD numbers, as a CSV flag column', () => {
    const table = qartodFlagTable(variable('qc', 'byte', {}));
    expect([1, 4, 9, 7].map((raw) => table.flagOf(raw))).toEqual([1, 4, 9, null]);
  });

  it('refuses other schemes, bit masks, contradictions and unpaired meanings, naming the variable', () => {
    const argo = variable('qc', 'byte', {
      flag_values: numbers('byte', 0, 1, 2, 3, 4, 9),
      flag_meanings: text('no_qc good_data probably_good_data bad_data_that_are_potentially_correctable bad_data missing_value'),
    });
    // "fail" is QARTOD 4, so the value 1 cannot be read as QARTOD's number; "questionable" is no QARTOD name.
    const contradicting = variable('qc', 'byte', { flag_values: numbers('byte', 1, 3), flag_meanings: text('fail questionable') });
    const masks = variable('qc', 'byte', { flag_masks: numbers('byte', 1, 2), flag_meanings: text('low high') });
    const unpaired = variable('qc', 'byte', { flag_values: numbers('byte', 1, 4), flag_meanings: text('pass') });
    for (const bad of [argo, contradicting, masks, unpaired]) {
      const error = fileError(() => qartodFlagTable(bad));
      expect(error.code).toBe('unknown-flags');
      expect(error.message).toContain('"qc"');
    }
  });
});

describe('telling netCDF from CSV by the first bytes (NetCDF classic format specification; HDF5 format signature)', () => {
  it('reads the magic bytes, whatever the name', () => {
    const bytes = (...values: number[]) => Uint8Array.from(values);
    expect(netcdfFormatOf(bytes(0x43, 0x44, 0x46, 1))).toBe('classic');
    expect(netcdfFormatOf(bytes(0x43, 0x44, 0x46, 2))).toBe('64-bit offset');
    expect(netcdfFormatOf(bytes(0x43, 0x44, 0x46, 5))).toBe('64-bit data');
    expect(netcdfFormatOf(bytes(0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a))).toBe('netCDF-4');
    expect(netcdfFormatOf(new TextEncoder().encode('CDF,value\n'))).toBeNull();
    expect(netcdfFormatOf(new TextEncoder().encode('time,value'))).toBeNull();
    expect(netcdfFormatOf(fs.readFileSync(path.join(DIR, 'good-netcdf4.nc')).subarray(0, 8))).toBe('netCDF-4');
  });
});
