import fs from 'node:fs';
import { collectDecodedRows, type CollectedRows } from '@/lib/intake/rows';
import { FLAG_MISSING } from '@/lib/quality/flags';
import { openClassic } from './classic';
import { textAttribute, type NetcdfDataset } from './dataset';
import { NetcdfFileError } from './errors';
import { netcdfFormatOf, readHead, type NetcdfSource } from './format';
import { qartodFlagTable } from './flags';
import { withHdf5 } from './hdf5';
import { decodeTimes, parseTimeUnits, type DecodedTimes } from './time';
import { missingOf, readingsOf } from './values';
import { chooseVariable, dataVariables, flagVariableOf, timeOf } from './variables';

/** A classic file is read whole into memory (netcdfjs reads from a buffer); past this, a file belongs in netCDF-4. */
const MAX_CLASSIC_BYTES = 1024 * 1024 * 1024;

/** Which variable to read for one series, and its flag variable (by default the one its ancillary_variables name). */
export interface NetcdfColumn {
  variable?: string;
  flagVariable?: string;
}

/**
 * Reads a netCDF file (classic, 64-bit offset or netCDF-4, told apart by its first bytes) into one set of validated,
 * sorted, unique rows per requested variable — the same rows a CSV gives, so everything after reading is shared.
 * Times come from each variable's CF time coordinate, values are unpacked, missing readings skipped, flags mapped
 * to QARTOD. A problem with the file or a variable as a whole throws NetcdfFileError: the file is refused whole.
 */
export async function collectNetcdfColumns(source: NetcdfSource, columns: NetcdfColumn[]): Promise<CollectedRows[]> {
  const head = 'bytes' in source ? source.bytes.subarray(0, 8) : readHead(source.path);
  const format = netcdfFormatOf(head);
  if (!format) {
    throw new NetcdfFileError('not-netcdf', 'The file is not netCDF: it starts neither with "CDF" and a version byte nor with the HDF5 signature of netCDF-4.');
  }
  const read = (dataset: NetcdfDataset) => {
    const times = new Map<string, DecodedTimes>();
    return columns.map((column) => readColumn(dataset, column, times));
  };
  if (format === 'netCDF-4') return withHdf5(source, read);
  if ('path' in source && fs.statSync(source.path).size > MAX_CLASSIC_BYTES) {
    throw new NetcdfFileError(
      'too-large',
      'The classic netCDF file is larger than 1 GiB; convert it to netCDF-4 (e.g. "nccopy -k nc4 -d 1 in.nc out.nc") or split it.',
    );
  }
  return read(await openClassic('bytes' in source ? source.bytes : fs.readFileSync(source.path), format));
}

function readColumn(dataset: NetcdfDataset, column: NetcdfColumn, decoded: Map<string, DecodedTimes>): CollectedRows {
  const data = chooseVariable(dataset, column.variable);
  const time = timeOf(dataset, data);
  const units = textAttribute(time, 'units') ?? '';
  const calendar = textAttribute(time, 'calendar');
  let times = decoded.get(time.name);
  if (!times) {
    const parsed = parseTimeUnits(units, calendar, time.name);
    const timeMissing = missingOf(time);
    const raw = time.read();
    times = decodeTimes(raw, parsed, (i) => timeMissing.test(raw[i]));
    decoded.set(time.name, times);
  }
  const n = times.t.length;
  const raw = data.read();
  if (raw.length !== n) {
    throw new NetcdfFileError('not-on-time', `The variable "${data.name}" has ${raw.length} values but its time variable "${time.name}" has ${n}.`);
  }
  const readings = readingsOf(data, raw);
  const notes: string[] = [];
  const flagVariable = flagVariableOf(dataset, data, column.flagVariable);
  let flag: Uint8Array | null = null;
  const flagProblems = new Map<number, string>();
  if (flagVariable) {
    const table = qartodFlagTable(flagVariable);
    const flagRaw = flagVariable.read();
    if (flagRaw.length !== n) {
      throw new NetcdfFileError('not-on-time', `The flag variable "${flagVariable.name}" has ${flagRaw.length} values but "${data.name}" has ${n}.`);
    }
    const flagMissing = missingOf(flagVariable);
    flag = new Uint8Array(n);
    for (let i = 0; i < n; i++) {
      if (readings.missing[i]) flag[i] = FLAG_MISSING;
      else if (flagMissing.test(flagRaw[i])) flag[i] = 0;
      else {
        const qartod = table.flagOf(flagRaw[i]);
        if (qartod === null) flagProblems.set(i, `the flag ${flagRaw[i]} of "${flagVariable.name}" is not one of its QARTOD flags`);
        else flag[i] = qartod;
      }
    }
    notes.push(`Flags from ${table.describe}.`);
  } else if (readings.count) {
    // Missing readings carry flag 9 so the collector skips them as it skips a CSV's empty cells flagged missing.
    flag = new Uint8Array(n);
    for (let i = 0; i < n; i++) if (readings.missing[i]) flag[i] = FLAG_MISSING;
  }
  return collectDecodedRows(
    {
      t: times.t,
      timeProblems: times.problems,
      value: readings.values,
      flag,
      flagProblems,
      timeLabel: time.name,
      valueLabel: data.name,
      flagLabel: flagVariable?.name ?? null,
      missingAre: `"${data.name}" at ${missingOf(data).describe()}`,
      notes,
    },
    {
      format: dataset.format,
      variable: data.name,
      flagVariable: flagVariable?.name ?? null,
      timeVariable: time.name,
      timeUnits: units,
      calendar: calendar ?? 'standard',
      candidates: dataVariables(dataset),
    },
  );
}

/** Reads one series' variable (see collectNetcdfColumns). */
export async function collectNetcdfRows(source: NetcdfSource, column: NetcdfColumn): Promise<CollectedRows> {
  const [rows] = await collectNetcdfColumns(source, [column]);
  return rows;
}
