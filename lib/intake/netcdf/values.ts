import { numberAttribute, type NetcdfType, type NetcdfVariable } from './dataset';

/**
 * The netCDF library's default fill values (netcdf.h NC_FILL_*), which mark unwritten values of a variable without
 * its own _FillValue. Not for byte and ubyte: the NUG says not to assume a default fill for bytes (netCDF4-python
 * does the same), since bytes often hold flags.
 */
const DEFAULT_FILL: Partial<Record<NetcdfType, number>> = {
  short: -32767,
  ushort: 65535,
  int: -2147483647,
  uint: 4294967295,
  int64: -9223372036854775806,
  uint64: 18446744073709551614,
  float: 9.969209968386869e36,
  double: 9.969209968386869e36,
};

/** Masks a variable's missing readings: which raw values stand for no measurement. */
export interface Missing {
  /** true for a raw value that is no measurement */
  test(raw: number): boolean;
  /** what the masks are, for the run's notes ("_FillValue -999, outside 0 to 50 or NaN") */
  describe(): string;
}

/**
 * Missing values of a variable (CF 1.x §2.5.1 "Missing data, valid and actual range of data"): the _FillValue (or the
 * library's default fill when there is none), every missing_value, values outside valid_min/valid_max/valid_range,
 * and NaN. They are compared with the packed values, as §8.1 asks of these attributes' types; a valid range given in
 * the type of scale_factor while the data are packed in another type is read as unpacked values (the NUG's rule).
 */
export function missingOf(variable: NetcdfVariable): Missing {
  const fill = numberAttribute(variable, '_FillValue');
  const fills = fill ? fill.numbers.slice(0, 1) : DEFAULT_FILL[variable.type] !== undefined ? [DEFAULT_FILL[variable.type]!] : [];
  const missingValues = numberAttribute(variable, 'missing_value')?.numbers ?? [];
  const marks = new Set<number>([...fills, ...missingValues].map((v) => (variable.type === 'float' ? Math.fround(v) : v)));
  const range = numberAttribute(variable, 'valid_range');
  const min = numberAttribute(variable, 'valid_min') ?? (range ? { type: range.type, numbers: [range.numbers[0]] } : null);
  const max = numberAttribute(variable, 'valid_max') ?? (range ? { type: range.type, numbers: [range.numbers[1]] } : null);
  const scale = numberAttribute(variable, 'scale_factor') ?? numberAttribute(variable, 'add_offset');
  const packing = packingOf(variable);
  const inUnpackedUnits = (type: NetcdfType) => scale !== null && type === scale.type && type !== variable.type;
  const low = min ? (inUnpackedUnits(min.type) ? (raw: number) => packing.unpack(raw) < min.numbers[0] : (raw: number) => raw < min.numbers[0]) : null;
  const high = max ? (inUnpackedUnits(max.type) ? (raw: number) => packing.unpack(raw) > max.numbers[0] : (raw: number) => raw > max.numbers[0]) : null;
  return {
    test: (raw) => Number.isNaN(raw) || marks.has(raw) || (low !== null && low(raw)) || (high !== null && high(raw)),
    describe: () => {
      const parts: string[] = [];
      if (fill) parts.push(`_FillValue ${fill.numbers[0]}`);
      else if (fills.length) parts.push(`the default fill value ${fills[0]}`);
      if (missingValues.length) parts.push(`missing_value ${missingValues.join(', ')}`);
      if (min || max) parts.push(`outside ${min ? min.numbers[0] : '−∞'} to ${max ? max.numbers[0] : '∞'}`);
      return [...parts, 'NaN'].join(', ').replace(/, NaN$/, ' or NaN');
    },
  };
}

/** Packed values unpacked (CF 1.x §8.1 "Packed Data"): unpacked = packed × scale_factor + add_offset. */
export function packingOf(variable: NetcdfVariable): { packed: boolean; unpack(raw: number): number } {
  const scale = numberAttribute(variable, 'scale_factor')?.numbers[0] ?? 1;
  const offset = numberAttribute(variable, 'add_offset')?.numbers[0] ?? 0;
  const packed = scale !== 1 || offset !== 0;
  return { packed, unpack: packed ? (raw) => raw * scale + offset : (raw) => raw };
}

/** A variable's readings unpacked, NaN where missing; `missing` counts them. O(n). */
export function readingsOf(variable: NetcdfVariable, raw: Float64Array): { values: Float64Array; missing: Uint8Array; count: number } {
  const mask = missingOf(variable);
  const { unpack } = packingOf(variable);
  const values = new Float64Array(raw.length);
  const missing = new Uint8Array(raw.length);
  let count = 0;
  for (let i = 0; i < raw.length; i++) {
    if (mask.test(raw[i])) {
      values[i] = Number.NaN;
      missing[i] = 1;
      count++;
    } else {
      values[i] = unpack(raw[i]);
    }
  }
  return { values, missing, count };
}
