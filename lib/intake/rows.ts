import { observationSchema, type PushedObservation } from '@/lib/schemas/observation';
import type { Delimiter } from './choices';
import { CsvFileError, readCsv, type CsvInput, type CsvLayout, type CsvStats } from './csv';
import { MAX_ABS_TIME_MS, parseTime, type TimeFormat, type TimeReading } from './time-formats';
import { FLAG_MISSING, isQartodFlag } from '@/lib/quality/flags';
import type { NetcdfLayout } from './netcdf/dataset';

/** How to read the time and value of each record; columns by header name or 0-based position. */
export interface IntakeMapping {
  timeColumn: string | number;
  valueColumn: string | number;
  timeFormat: TimeFormat;
  delimiter?: Delimiter;
  /** true: first record is a header; false: it is data; 'auto' (default with positional columns): decided per file. */
  header?: boolean | 'auto';
  /** The column holding each value's QARTOD flag from the source (a station file's flag column); none when absent. */
  flagColumn?: string | number;
  /** netCDF files: the variable to read and its QC flag variable (lib/intake/netcdf); CSV files ignore them. */
  variable?: string;
  flagVariable?: string;
}

/** A mapping that may also read plain numeric times (`number`): the command line's, since a stored series holds instants. */
export type CsvRowMapping = Omit<IntakeMapping, 'timeFormat'> & { timeFormat: TimeReading };

export interface RejectedRow {
  line: number;
  column: string | null;
  reason: string;
}

/** Rejections beyond this many are counted but not listed, so a wholly wrong million-row file keeps a small report. */
const MAX_LISTED_REJECTIONS = 1000;

/** Rows read from one input, validated, in time order, one per instant. */
export interface CollectedRows {
  /** Sorted, unique instants with their values and source lines. */
  t: Float64Array;
  value: Float64Array;
  line: Int32Array;
  /** The source's QARTOD flag per row (0: none given); null when the input has no flag column. */
  sourceFlag: Uint8Array | null;
  rowsRead: number;
  /** Label of the time column (header name or "column N"), for rejections found after reading. */
  timeColumn: string;
  /** Rows equal to another row of the same input (same instant, same value). */
  duplicatesInInput: number;
  rejectedCount: number;
  rejectedRows: RejectedRow[];
  notes: string[];
  layout: CsvLayout | null;
  stats: CsvStats | null;
  /** Where the rows of a netCDF file came from (format, variables, time units); absent for CSV and pushes. */
  netcdf?: NetcdfLayout;
}

/** Typed arrays that grow by doubling: a million rows cost 20 bytes each instead of an object each. */
class Columns {
  t = new Float64Array(1024);
  value = new Float64Array(1024);
  line = new Int32Array(1024);
  flag = new Uint8Array(1024);
  length = 0;

  push(t: number, value: number, line: number, flag = 0): void {
    if (this.length === this.t.length) {
      const grow = <A extends Float64Array | Int32Array>(a: A): A => {
        const b = new (a.constructor as new (n: number) => A)(a.length * 2);
        b.set(a);
        return b;
      };
      this.t = grow(this.t);
      this.value = grow(this.value);
      this.line = grow(this.line);
      const flags = new Uint8Array(this.flag.length * 2);
      flags.set(this.flag);
      this.flag = flags;
    }
    this.t[this.length] = t;
    this.value[this.length] = value;
    this.line[this.length] = line;
    this.flag[this.length] = flag;
    this.length++;
  }
}

const DECIMAL = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/;

/**
 * A value cell → number, or the reason it is none. NaN and infinity words become NaN/±Infinity so the
 * observation schema rejects them with its own message; a comma decimal mark gets a message of its own.
 */
function parseValue(raw: string | number): number | string {
  if (typeof raw === 'number') return raw;
  const text = raw.trim();
  if (text === '') return 'the value is empty';
  // The usual cell first: a decimal number matches none of the words and forms below.
  if (DECIMAL.test(text)) return Number(text);
  if (/^[+-]?nan$/i.test(text)) return Number.NaN;
  const infinite = /^([+-]?)(?:inf|infinity|∞)$/i.exec(text);
  if (infinite) return infinite[1] === '-' ? -Infinity : Infinity;
  if (/^[+-]?\d+,\d+$/.test(text)) {
    return `"${text}" uses a comma as decimal mark; Brinkwatch reads a point (${text.replace(',', '.')}). Export with point decimals`;
  }
  return `"${text.length > 40 ? `${text.slice(0, 37)}...` : text}" is not a number`;
}

/** True for a cell that reads as a number (or a NaN/infinity word, or a comma decimal): the mark of a data record rather than a header. */
function numericLike(cell: string | undefined): boolean {
  if (cell === undefined) return false;
  const text = cell.trim();
  return DECIMAL.test(text) || /^[+-]?\d+,\d+$/.test(text) || /^[+-]?(nan|inf|infinity)$/i.test(text);
}

/** Collects validated rows; shared by the CSV and JSON readers so every way in judges a row the same way. */
class RowCollector {
  readonly columns = new Columns();
  rowsRead = 0;
  rejectedCount = 0;
  /** Rows the source flagged 9 (missing) with no value: expected gaps, neither stored nor rejected. */
  missing = 0;
  /** How the note names such rows: a CSV's flag column says so; a netCDF file's fill values do. */
  missingAre = 'flagged 9 (missing) without a value';
  hasFlags = false;
  readonly rejectedRows: RejectedRow[] = [];
  readonly notes: string[] = [];
  private offsetStyle: 'offset' | 'local' | null = null;
  private readonly offsets = new Set<string>();
  /** Label of the time column, for rejections found after reading (in-input conflicts). */
  timeLabel = 'time';

  constructor(
    private readonly format: TimeReading,
    private readonly zone: string,
  ) {}

  reject(line: number, column: string | null, reason: string): void {
    this.rejectedCount++;
    if (this.rejectedRows.length < MAX_LISTED_REJECTIONS) this.rejectedRows.push({ line, column, reason });
  }

  add(
    line: number,
    timeCell: string | number,
    valueCell: string | number,
    timeColumn: string,
    valueColumn: string,
    flagCell?: string,
    flagColumn?: string,
  ): void {
    this.rowsRead++;
    let flag = 0;
    if (flagCell !== undefined) {
      const text = flagCell.trim();
      if (text !== '') {
        flag = Number(text);
        if (!isQartodFlag(flag))
          return this.reject(
            line,
            flagColumn ?? 'flag',
            `the flag "${text.slice(0, 20)}" is not on the QARTOD scale (1 pass, 2 not evaluated, 3 suspect, 4 fail, 9 missing)`,
          );
      }
    }
    const time =
      typeof timeCell === 'number'
        ? parseTime(String(timeCell), this.format === 'iso8601' || this.format === 'date' ? 'epoch-milliseconds' : this.format, this.zone)
        : parseTime(timeCell, this.format, this.zone);
    if (!time.ok) return this.reject(line, timeColumn, time.reason);
    if (time.offset !== undefined || time.local) {
      // Offsets on some rows and none on others usually means two exports were pasted together; guessing is unsafe.
      const style = time.local ? 'local' : 'offset';
      this.offsetStyle ??= style;
      if (style !== this.offsetStyle) {
        return this.reject(
          line,
          timeColumn,
          style === 'local'
            ? 'this time has no UTC offset while earlier rows have one; give every row an offset (or none)'
            : 'this time has a UTC offset while earlier rows have none; give every row an offset (or none)',
        );
      }
      if (time.offset !== undefined && this.offsets.size < 10) this.offsets.add(time.offset);
    }
    this.store(line, time.t, parseValue(valueCell), flag, timeColumn, valueColumn);
  }

  /**
   * A reading already decoded (a netCDF record): its instant or why it has none, its value (NaN with flag 9:
   * missing) and its QARTOD flag (0: none given), judged from here on as a CSV row is.
   */
  addDecoded(line: number, t: number, timeProblem: string | undefined, value: number, flag: number, timeColumn: string, valueColumn: string): void {
    this.rowsRead++;
    if (timeProblem !== undefined) return this.reject(line, timeColumn, timeProblem);
    this.store(line, t, value, flag, timeColumn, valueColumn);
  }

  private store(line: number, t: number, value: number | string, flag: number, timeColumn: string, valueColumn: string): void {
    if (flag === FLAG_MISSING && (typeof value === 'string' || Number.isNaN(value))) {
      this.missing++;
      return;
    }
    if (typeof value === 'string') return this.reject(line, valueColumn, value);
    // A plain numeric time is no instant: only its value goes through the schema.
    if (this.format === 'number') {
      if (Number.isFinite(value)) return this.columns.push(t, value, line, flag);
      return this.reject(line, valueColumn, observationSchema.shape.value.safeParse(value).error?.issues[0].message ?? 'the value must be a number');
    }
    // What the schema accepts, decided without building its issue list for each of a million good rows.
    if (Number.isFinite(value) && Number.isInteger(t) && Math.abs(t) <= MAX_ABS_TIME_MS) return this.columns.push(t, value, line, flag);
    const checked = observationSchema.safeParse({ t, value });
    if (!checked.success) {
      const issue = checked.error.issues[0];
      return this.reject(line, issue.path[0] === 't' ? timeColumn : valueColumn, issue.message);
    }
    this.columns.push(t, value, line, flag);
  }

  finish(layout: CsvLayout | null, stats: CsvStats | null): CollectedRows {
    if (this.offsets.size > 1) {
      this.notes.push(`Rows carry different UTC offsets (${[...this.offsets].join(', ')}); each time was converted with its own offset.`);
    }
    if (this.missing)
      this.notes.push(
        `${this.missing.toLocaleString('en-US')} row${this.missing === 1 ? ' was' : 's were'} ${this.missingAre}; ${this.missing === 1 ? 'it was' : 'they were'} skipped.`,
      );
    const unique = normalise(this.columns, this.notes, (line, reason) => this.reject(line, this.timeLabel, reason), this.format, this.hasFlags);
    return {
      ...unique,
      timeColumn: this.timeLabel,
      rowsRead: this.rowsRead,
      rejectedCount: this.rejectedCount,
      rejectedRows: this.rejectedRows,
      notes: this.notes,
      layout,
      stats,
    };
  }
}

/**
 * Sorts by time (stable: ties keep file order) and reduces each instant to one row. Rows repeating an instant with
 * the same value are duplicates (one is kept); with different values none can be trusted, so all are rejected.
 */
function normalise(
  columns: Columns,
  notes: string[],
  reject: (line: number, reason: string) => void,
  format: TimeReading,
  hasFlags: boolean,
): Pick<CollectedRows, 't' | 'value' | 'line' | 'sourceFlag' | 'duplicatesInInput'> {
  const n = columns.length;
  const { t, value, line, flag } = columns;
  let firstUnsorted = -1;
  for (let i = 1; i < n; i++) {
    if (t[i] < t[i - 1]) {
      firstUnsorted = i;
      break;
    }
  }
  const order = new Uint32Array(n);
  for (let i = 0; i < n; i++) order[i] = i;
  if (firstUnsorted !== -1) {
    order.sort((a, b) => t[a] - t[b] || a - b);
    const agesExpected = format === 'age-years-bp' || format === 'age-kyr-bp';
    if (!agesExpected) notes.push(`Rows were not in time order (first at line ${line[firstUnsorted]}); they were sorted before storing.`);
  }
  const outT = new Float64Array(n);
  const outV = new Float64Array(n);
  const outL = new Int32Array(n);
  const outF = hasFlags ? new Uint8Array(n) : null;
  let m = 0;
  let duplicates = 0;
  for (let i = 0; i < n;) {
    let j = i + 1;
    while (j < n && t[order[j]] === t[order[i]]) j++;
    const first = order[i];
    let same = true;
    for (let k = i + 1; k < j; k++) if (value[order[k]] !== value[first]) same = false;
    if (same) {
      outT[m] = t[first];
      outV[m] = value[first];
      outL[m] = line[first];
      if (outF) outF[m] = flag[first];
      m++;
      duplicates += j - i - 1;
    } else {
      const lines = Array.from(order.subarray(i, j), (k) => line[k]);
      for (const l of lines) {
        reject(l, `the same instant is on lines ${lines.join(', ')} with different values; none of them is stored`);
      }
    }
    i = j;
  }
  return {
    t: outT.subarray(0, m),
    value: outV.subarray(0, m),
    line: outL.subarray(0, m),
    sourceFlag: outF ? outF.subarray(0, m) : null,
    duplicatesInInput: duplicates,
  };
}

function columnLabel(column: string | number, header: string[] | null): string {
  if (typeof column === 'string') return column;
  return header?.[column] || `column ${column + 1}`;
}

/** Reads a CSV into validated, sorted, unique rows; file-level problems throw CsvFileError. */
export async function collectCsvRows(input: CsvInput, mapping: CsvRowMapping, zone: string): Promise<CollectedRows> {
  const [rows] = await collectCsvColumns(input, { ...mapping, values: [{ valueColumn: mapping.valueColumn, flagColumn: mapping.flagColumn, zone }] });
  return rows;
}

/** One value column of a file (a station feed's variable), with its flag column and the time zone of its series. */
export interface ValueColumn {
  valueColumn: string | number;
  flagColumn?: string | number;
  zone: string;
}

/**
 * Reads a CSV once into validated, sorted, unique rows for each value column (a station file with many variables
 * feeds one series per column): every column gets its own rejections, duplicates and notes, since a sensor may be
 * off while the others read. File-level problems (no such column, wrong delimiter, binary data) throw CsvFileError
 * for the whole file. O(rows × columns).
 */
export async function collectCsvColumns(
  input: CsvInput,
  mapping: Omit<CsvRowMapping, 'valueColumn' | 'flagColumn'> & {
    values: ValueColumn[];
    /** a column of notes (maintenance visits): each filled cell is handed to `onEvent` with its row's time cell */
    eventColumn?: string;
    onEvent?: (timeCell: string, note: string, line: number) => void;
  },
): Promise<CollectedRows[]> {
  const collectors = mapping.values.map((column) => new RowCollector(mapping.timeFormat, column.zone));
  const first = mapping.values[0];
  const named = typeof mapping.timeColumn === 'string' || mapping.values.some((v) => typeof v.valueColumn === 'string');
  let timeIndex = -1;
  let eventIndex = -1;
  let timeLabel = '';
  let indexes: { value: number; flag: number; valueLabel: string; flagLabel: string; needed: number }[] = [];
  let delimiterName = '';
  const resolve = (layout: CsvLayout) => {
    const find = (column: string | number): number => {
      if (typeof column === 'number') {
        if (column >= layout.fieldCount && layout.fieldCount <= 1) {
          throw new CsvFileError(
            'single-column',
            `Only one column was found. Brinkwatch reads comma, semicolon, tab or pipe delimited files; check the delimiter (expected time and value in separate columns).`,
          );
        }
        return column;
      }
      if (!layout.header) throw new CsvFileError('missing-column', `The mapping names the column "${column}", but the file has no header line.`);
      const index = layout.header.findIndex((h) => h.toLowerCase() === column.toLowerCase());
      if (index === -1) {
        throw new CsvFileError('missing-column', `The header has no column "${column}" (it has: ${layout.header.map((h) => `"${h}"`).join(', ')}).`);
      }
      return index;
    };
    timeIndex = find(mapping.timeColumn);
    timeLabel = columnLabel(mapping.timeColumn, layout.header);
    if (mapping.eventColumn !== undefined) eventIndex = find(mapping.eventColumn);
    indexes = mapping.values.map((v) => {
      const value = find(v.valueColumn);
      const flag = v.flagColumn === undefined ? -1 : find(v.flagColumn);
      return {
        value,
        flag,
        needed: Math.max(timeIndex, value, flag) + 1,
        valueLabel: columnLabel(v.valueColumn, layout.header),
        flagLabel: v.flagColumn === undefined ? '' : columnLabel(v.flagColumn, layout.header),
      };
    });
    collectors.forEach((collector, k) => {
      collector.timeLabel = timeLabel;
      collector.hasFlags = indexes[k].flag !== -1;
    });
    delimiterName = layout.delimiter === '\t' ? 'tab' : `"${layout.delimiter}"`;
  };
  const looksLikeData = (fields: string[]) => {
    const ti = typeof mapping.timeColumn === 'number' ? mapping.timeColumn : 0;
    const vi = typeof first.valueColumn === 'number' ? first.valueColumn : 1;
    return numericLike(fields[vi]) || parseTime(fields[ti] ?? '', mapping.timeFormat, first.zone).ok;
  };
  const { layout, stats } = await readCsv(input, {
    delimiter: mapping.delimiter,
    header: mapping.header ?? (named ? true : 'auto'),
    looksLikeData,
    onLayout: resolve,
    onRow: (fields, line, problem) => {
      const note = eventIndex === -1 || problem ? '' : (fields[eventIndex] ?? '').trim();
      if (note) mapping.onEvent?.(fields[timeIndex] ?? '', note, line);
      for (let k = 0; k < collectors.length; k++) {
        const collector = collectors[k];
        const column = indexes[k];
        if (problem) {
          collector.rowsRead++;
          collector.reject(line, null, problem);
        } else if (fields.length < column.needed) {
          // Each column needs only its own cells: a short line may still carry the first variables of a station file.
          collector.rowsRead++;
          const missing = fields.length <= timeIndex ? timeLabel : fields.length <= column.value ? column.valueLabel : column.flagLabel || column.valueLabel;
          collector.reject(
            line,
            missing,
            `the line has ${fields.length} field${fields.length === 1 ? '' : 's'}; expected at least ${column.needed} separated by ${delimiterName}`,
          );
        } else {
          collector.add(
            line,
            fields[timeIndex],
            fields[column.value],
            timeLabel,
            column.valueLabel,
            column.flag === -1 ? undefined : fields[column.flag],
            column.flagLabel,
          );
        }
      }
    },
  });
  return collectors.map((collector) => {
    if (layout.bom) collector.notes.push(`A byte order mark (${layout.encoding}) was found and removed.`);
    if (layout.encoding === 'windows-1252') {
      collector.notes.push(
        'The file is not valid UTF-8, so it was read as Windows-1252 (Western European), as older spreadsheets and loggers write it; check that names and units with accents or symbols read right.',
      );
    }
    return collector.finish(layout, stats);
  });
}

/** One variable of a netCDF file, decoded: instants (NaN where `timeProblems` says why), values (NaN: missing) and flags. */
export interface DecodedReadings {
  t: Float64Array;
  timeProblems: Map<number, string>;
  value: Float64Array;
  /** QARTOD flag per reading (0: none given; 9 marks a missing reading); null when nothing is flagged */
  flag: Uint8Array | null;
  /** per-reading problems of the flag (a value not among the flag variable's), rejected as a CSV's off-scale flag is */
  flagProblems: Map<number, string>;
  timeLabel: string;
  valueLabel: string;
  /** the flag variable's name; null when the variable has none (then `flag` only marks missing readings) */
  flagLabel: string | null;
  /** what marks a missing reading (e.g. "_FillValue -999"), for the note counting them */
  missingAre: string;
  notes: string[];
}

/**
 * Decoded readings → validated, sorted, unique rows, through the same collector as a CSV's cells, so a netCDF file
 * is judged, de-duplicated and reported like any other input. `line` is the 1-based position along the time
 * dimension. O(n log n) when out of order, else O(n).
 */
export function collectDecodedRows(readings: DecodedReadings, netcdf: NetcdfLayout): CollectedRows {
  const collector = new RowCollector('epoch-milliseconds', 'UTC');
  collector.timeLabel = readings.timeLabel;
  collector.hasFlags = readings.flagLabel !== null;
  collector.missingAre = `missing (${readings.missingAre}; QARTOD 9)`;
  for (let i = 0; i < readings.t.length; i++) {
    const flagProblem = readings.flagProblems.get(i);
    if (flagProblem !== undefined) {
      collector.rowsRead++;
      collector.reject(i + 1, readings.flagLabel, flagProblem);
      continue;
    }
    collector.addDecoded(
      i + 1,
      readings.t[i],
      readings.timeProblems.get(i),
      readings.value[i],
      readings.flag?.[i] ?? 0,
      readings.timeLabel,
      readings.valueLabel,
    );
  }
  collector.notes.push(...readings.notes);
  return { ...collector.finish(null, null), netcdf };
}

/** Validates pushed JSON points; `line` in reports is the 1-based position in the array. */
export function collectPushedRows(points: PushedObservation[], format: TimeFormat, zone: string): CollectedRows {
  const collector = new RowCollector(format, zone);
  // Flags are kept as a CSV flag column's are: when any point carries one, the points without one have none (0).
  collector.hasFlags = points.some((point) => point.flag !== undefined && point.flag !== null);
  points.forEach((point, index) =>
    collector.add(
      index + 1,
      point.time,
      point.value ?? '',
      'time',
      'value',
      collector.hasFlags ? (point.flag === undefined || point.flag === null ? '' : String(point.flag)) : undefined,
      'flag',
    ),
  );
  return collector.finish(null, null);
}
