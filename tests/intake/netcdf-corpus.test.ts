import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { NetcdfFileError } from '@/lib/intake/netcdf/errors';
import { collectNetcdfColumns, collectNetcdfRows, type NetcdfColumn } from '@/lib/intake/netcdf/read';
import type { NetcdfSource } from '@/lib/intake/netcdf/format';
import { formatInstant } from '@/lib/intake/time-formats';

const DIR = path.resolve(__dirname, '../../fixtures/netcdf');

interface Case {
  file: string;
  mapping: NetcdfColumn;
  fileError?: string;
  format?: string;
  times?: string[];
  values?: (number | null)[];
  rawFlags?: (number | null)[];
}

/** Written by fixtures/netcdf/make.py: what netCDF4-python and cftime read from each file (null: masked). */
const cases = JSON.parse(fs.readFileSync(path.join(DIR, 'expected.json'), 'utf8')) as Record<string, Case>;

/**
 * The QARTOD flags of the two files with flag variables, from the flag_meanings make.py writes and the QARTOD
 * manual's primary flags (pass 1, not evaluated 2, suspect 3, fail 4, missing 9): good-classic.nc numbers its
 * meanings as QARTOD does; good-netcdf4.nc numbers "not_evaluated pass suspect fail missing_data" 0–4.
 */
const QARTOD_OF_RAW: Record<string, (raw: number) => number> = {
  'good-classic.nc': (raw) => raw,
  'good-netcdf4.nc': (raw) => [2, 1, 3, 4, 9][raw],
};

async function read(source: NetcdfSource, mapping: NetcdfColumn) {
  try {
    return { rows: await collectNetcdfRows(source, mapping), error: null };
  } catch (error) {
    if (error instanceof NetcdfFileError) return { rows: null, error };
    throw error;
  }
}

describe('netCDF corpus (fixtures/netcdf/expected.json, values read by the netCDF4 library)', () => {
  it('lists a case for every fixture file', () => {
    const files = fs
      .readdirSync(DIR)
      .filter((f) => f.endsWith('.nc'))
      .sort();
    const named = [
      ...new Set(
        Object.entries(cases)
          .filter(([k]) => !k.startsWith('_'))
          .map(([, c]) => c.file),
      ),
    ].sort();
    expect(named).toEqual(files);
  });

  for (const [name, expected] of Object.entries(cases)) {
    if (name.startsWith('_')) continue;
    it(name, async () => {
      const file = path.join(DIR, expected.file);
      // A drop folder hands the reader a path, an upload its bytes: both must read the same.
      for (const source of [{ path: file }, { bytes: new Uint8Array(fs.readFileSync(file)) }]) {
        const { rows, error } = await read(source, expected.mapping);
        if (expected.fileError) {
          expect(error?.code, `file error of ${expected.file}`).toBe(expected.fileError);
          expect(error!.message.length).toBeGreaterThan(20);
          continue;
        }
        expect(error).toBeNull();
        const r = rows!;
        expect(r.netcdf?.format).toBe(expected.format);
        const kept = expected.values!.map((value, i) => ({ value, time: expected.times![i], raw: expected.rawFlags?.[i] })).filter((x) => x.value !== null);
        expect(r.rowsRead).toBe(expected.values!.length);
        expect(r.rejectedCount).toBe(0);
        expect(Array.from(r.t, formatInstant)).toEqual(kept.map((x) => x.time));
        expect(Array.from(r.value)).toEqual(kept.map((x) => x.value));
        if (expected.rawFlags) {
          expect(Array.from(r.sourceFlag!)).toEqual(kept.map((x) => QARTOD_OF_RAW[expected.file](x.raw!)));
        } else {
          expect(r.sourceFlag).toBeNull();
        }
        if (kept.length < expected.values!.length) expect(r.notes.join(' ')).toContain('missing');
      }
    });
  }
});

describe('netCDF station files through a feed (several variables of one file)', () => {
  const file = { path: path.join(DIR, 'good-classic.nc') };

  it('reads each mapped variable with its own flags and missing readings, once per file', async () => {
    const [temp, sal] = await collectNetcdfColumns(file, [{ variable: 'TEMP' }, { variable: 'sal' }]);
    expect(temp.netcdf).toMatchObject({ variable: 'temp', flagVariable: 'temp_qc' });
    expect(Array.from(temp.sourceFlag!)).toEqual([1, 1, 3, 4, 2]);
    expect(sal.sourceFlag).toBeNull();
    expect(Array.from(sal.value)).toEqual(cases['classic packed sal'].values!.filter((v) => v !== null));
  });

  it('refuses the whole file when one mapped variable or flag variable is missing, or its flags are not QARTOD', async () => {
    const refused = async (source: NetcdfSource, columns: NetcdfColumn[]) =>
      collectNetcdfColumns(source, columns).then(
        () => null,
        (error: unknown) => error as NetcdfFileError,
      );
    expect((await refused(file, [{ variable: 'temp' }, { variable: 'oxygen' }]))?.code).toBe('missing-variable');
    expect((await refused(file, [{ variable: 'sal', flagVariable: 'sal_qc' }]))?.code).toBe('missing-variable');
    expect((await refused({ path: path.join(DIR, 'bad-flags.nc') }, [{ variable: 'temp' }]))?.code).toBe('unknown-flags');
    expect((await refused({ path: path.join(DIR, 'truncated-netcdf4.nc') }, [{ variable: 'temp' }, { variable: 'oxygen' }]))?.code).toBe('truncated');
  });
});
