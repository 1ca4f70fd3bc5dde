/**
 * Command line for the indicator engine:
 *   npm run --silent analyze -- FILE.csv [--time COLUMN] [--value COLUMN] [--detrend METHOD] [--bandwidth EXTENT]
 *     [--window EXTENT] [--span EXTENT] [--indicators a,b] [--surrogates N] [--surrogate-method ar1|phase] [--seed S]
 *     [--seasonal none|month|day-of-year] [--log] [--max-gap N] [--gap-policy error|latest-stretch]
 *     [--min-coverage F] [--sampling-change start-after|subsample] [--shift-detection on|off]
 *     [--moving-average-width N] [--transition TIME]... [--maintenance TIME]... [--sensitivity] [--summary]
 * An EXTENT is a fraction of the analysed stretch, "<n> points" or an ISO 8601 duration (P90D, P2Y, PT12H).
 * Prints the analysis as JSON on stdout. Bad input: exit code 2, one line on stderr, nothing on stdout.
 * `series.time`, `stretch`, `shifts` and the quality findings' instants are written as the time column is: the
 * numbers themselves when it is numeric, ISO 8601 UTC strings when it holds dates (ISO 8601 without an offset is
 * read as UTC).
 */
import { readFileSync } from 'node:fs';
import Papa from 'papaparse';
import { ZodError } from 'zod';
import { AnalysisInputError, analysisSettingsSchema, runAnalysis, summarizeAnalysis, type AnalysisResult } from '../lib/engine';

class CliInputError extends Error {}

const ISO = /^(\d{4})-(\d{2})(?:-(\d{2})(?:[T ](\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d+))?)?)?)?(Z|[+-]\d{2}(?::?\d{2})?)?$/;

/** ISO 8601 calendar date or date-time to UTC milliseconds (no offset = UTC); NaN if not valid. */
export function parseIsoInstant(s: string): number {
  const m = ISO.exec(s);
  if (!m) return Number.NaN;
  const [, y, mo, d = '01', h = '00', mi = '00', se = '00', frac = '', zone = 'Z'] = m;
  const year = +y, month = +mo, day = +d, hour = +h, minute = +mi, second = +se;
  if (month < 1 || month > 12 || day < 1 || hour > 23 || minute > 59 || second > 59) return Number.NaN;
  if (day > new Date(Date.UTC(year, month, 0)).getUTCDate()) return Number.NaN;
  let t = Date.UTC(year, month - 1, day, hour, minute, second) + (frac ? Number(`0.${frac}`) * 1000 : 0);
  if (zone !== 'Z') {
    const sign = zone[0] === '-' ? -1 : 1;
    const digits = zone.slice(1).replace(':', '');
    t -= sign * (Number(digits.slice(0, 2)) * 60 + Number(digits.slice(2) || '0')) * 60_000;
  }
  return t;
}

const FLAGS = new Set(['sensitivity', 'summary', 'log']);
const OPTIONS = new Set([
  'time', 'value', 'detrend', 'bandwidth', 'window', 'span', 'indicators', 'surrogates', 'surrogate-method', 'seed', 'seasonal',
  'max-gap', 'gap-policy', 'min-coverage', 'sampling-change', 'shift-detection', 'moving-average-width',
]);
/** Options that may be given more than once (each adds a break). */
const REPEATED = new Set(['transition', 'maintenance']);

function parseArgs(argv: string[]): { file: string; opts: Record<string, string>; flags: Set<string>; repeated: Record<string, string[]> } {
  const opts: Record<string, string> = {};
  const repeated: Record<string, string[]> = {};
  const flags = new Set<string>();
  let file: string | undefined;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a.startsWith('--')) {
      const [key, inline] = a.slice(2).split(/=(.*)/s, 2);
      if (FLAGS.has(key)) flags.add(key);
      else if (OPTIONS.has(key) || REPEATED.has(key)) {
        const v = inline ?? argv[++i];
        if (v === undefined) throw new CliInputError(`option --${key} needs a value`);
        if (REPEATED.has(key)) (repeated[key] ??= []).push(v);
        else opts[key] = v;
      } else throw new CliInputError(`unknown option ${a}`);
    } else if (file === undefined) file = a;
    else throw new CliInputError(`unexpected argument ${a}`);
  }
  if (!file) throw new CliInputError('usage: analyze FILE.csv [--time COLUMN] [--value COLUMN] [--detrend ...] [--summary]');
  return { file, opts, flags, repeated };
}

function numberOption(opts: Record<string, string>, key: string): number | undefined {
  if (opts[key] === undefined) return undefined;
  const v = Number(opts[key]);
  if (opts[key].trim() === '' || !Number.isFinite(v)) throw new CliInputError(`option --${key}: '${opts[key]}' is not a number`);
  return v;
}

/** An extent option: a number is a fraction, anything else ("90 points", "P90D") is checked by the settings schema. */
function extentOption(opts: Record<string, string>, key: string): number | string | undefined {
  const v = opts[key];
  if (v === undefined) return undefined;
  const t = v.trim();
  return t !== '' && Number.isFinite(Number(t)) ? Number(t) : t;
}

function settingsFrom(opts: Record<string, string>, flags: Set<string>) {
  const raw = {
    detrend: opts.detrend,
    bandwidth: extentOption(opts, 'bandwidth'),
    window: extentOption(opts, 'window'),
    span: extentOption(opts, 'span'),
    movingAverageWidth: numberOption(opts, 'moving-average-width'),
    indicators: opts.indicators?.split(',').map((s) => s.trim()),
    surrogates: numberOption(opts, 'surrogates'),
    surrogateMethod: opts['surrogate-method'],
    seed: numberOption(opts, 'seed'),
    seasonal: opts.seasonal,
    logTransform: flags.has('log'),
    maxGap: numberOption(opts, 'max-gap'),
    gapPolicy: opts['gap-policy'],
    minCoverage: numberOption(opts, 'min-coverage'),
    samplingChange: opts['sampling-change'],
    shiftDetection: opts['shift-detection'],
    sensitivity: flags.has('sensitivity'),
  };
  const parsed = analysisSettingsSchema.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const field = String(issue.path[0] ?? '');
    const flag = field.replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`);
    throw new CliInputError(`option --${flag}: ${issue.message}`);
  }
  return parsed.data;
}

interface Table {
  time: Float64Array;
  value: Float64Array;
  numericTime: boolean;
  lines: Int32Array;
  timeName: string;
  valueName: string;
}

function readTable(file: string, timeCol: string | undefined, valueCol: string | undefined): Table {
  let bytes: Buffer;
  try {
    bytes = readFileSync(file);
  } catch (e) {
    throw new CliInputError(`cannot read file: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  const bom = bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf ? 3 : 0;
  let headerEnd = bytes.indexOf(10, bom);
  if (headerEnd < 0) headerEnd = bytes.length;
  const headerText = bytes.toString('utf8', bom, headerEnd).replace(/\r$/, '');
  const head = Papa.parse<string[]>(headerText);
  const headerRow = head.data[0];
  if (!headerRow || headerRow.every((c) => c.trim() === '')) throw new CliInputError('line 1: the file has no header row');
  const header = headerRow.map((h) => h.trim());
  const pick = (name: string | undefined, fallback: number, what: string) => {
    if (name === undefined) {
      if (header.length <= fallback) throw new CliInputError(`line 1: no ${what} column (the header has ${header.length} column${header.length === 1 ? '' : 's'})`);
      return fallback;
    }
    const i = header.indexOf(name);
    if (i < 0) throw new CliInputError(`line 1, column "${name}": no such column (columns: ${header.join(', ')})`);
    return i;
  };
  const ti = pick(timeCol, 0, 'time');
  const vi = pick(valueCol, 1, 'value');
  const timeName = header[ti];
  const valueName = header[vi];
  let cap = 1024;
  let time = new Float64Array(cap);
  let value = new Float64Array(cap);
  let lines = new Int32Array(cap);
  let m = 0;
  let numericTime: boolean | undefined;
  const take: CellSink = (line, cell, blank) => {
    if (blank) return;
    let t = cell.number(0);
    if (numericTime === undefined) {
      const ts = cell.text(0).trim();
      numericTime = Number.isFinite(t) && !ISO.test(ts);
      if (ts === '') throw new CliInputError(`line ${line}, column "${timeName}": missing time`);
    }
    if (!numericTime || !Number.isFinite(t)) {
      const ts = cell.text(0).trim();
      if (ts === '') throw new CliInputError(`line ${line}, column "${timeName}": missing time`);
      t = numericTime ? Number.NaN : parseIsoInstant(ts);
      if (!Number.isFinite(t)) {
        throw new CliInputError(`line ${line}, column "${timeName}": '${ts}' is not ${numericTime ? 'a number' : 'an ISO 8601 date or date-time'}`);
      }
    }
    let v = cell.number(1);
    if (!Number.isFinite(v)) {
      const vs = cell.text(1).trim();
      if (vs !== '') throw new CliInputError(`line ${line}, column "${valueName}": '${vs}' is not a number`);
      v = Number.NaN;
    }
    if (m === cap) {
      cap *= 2;
      const grow = <T extends Float64Array | Int32Array>(a: T, b: T): T => (b.set(a), b);
      time = grow(time, new Float64Array(cap));
      value = grow(value, new Float64Array(cap));
      lines = grow(lines, new Int32Array(cap));
    }
    time[m] = t;
    value[m] = v;
    lines[m] = line;
    m++;
  };
  const body = bytes.subarray(Math.min(bytes.length, headerEnd + 1));
  if (body.includes(34)) quotedCells(body.toString('utf8'), ti, vi, take);
  else plainCells(body, head.meta.delimiter, ti, vi, take);
  if (m === 0) throw new CliInputError('the file has a header but no data rows');
  return { time: time.subarray(0, m), value: value.subarray(0, m), numericTime: numericTime!, lines: lines.subarray(0, m), timeName, valueName };
}

/** The two wanted cells of a row (0 = time, 1 = value): as a number (NaN if empty or not one) or as text. */
interface RowCells {
  number(k: 0 | 1): number;
  text(k: 0 | 1): string;
}

/** Receives the two wanted cells of each data row, with its physical line number. */
type CellSink = (line: number, cells: RowCells, blank: boolean) => void;

/** Rows of a body with quoted fields: papaparse does the quoting rules. */
function quotedCells(body: string, ti: number, vi: number, take: CellSink): void {
  const parsed = Papa.parse<string[]>(body, { skipEmptyLines: false });
  const bad = parsed.errors.find((e) => e.type !== 'Delimiter');
  if (bad) throw new CliInputError(`line ${(bad.row ?? 0) + 2}: ${bad.message}`);
  let row: string[] = [];
  const cells: RowCells = {
    number: (k) => {
      const c = (row[k === 0 ? ti : vi] ?? '').trim();
      return c === '' ? Number.NaN : Number(c);
    },
    text: (k) => row[k === 0 ? ti : vi] ?? '',
  };
  // Line numbers count physical lines, so quoted line breaks inside a cell are added back.
  let line = 2;
  for (row of parsed.data) {
    take(line, cells, row.length === 1 && row[0].trim() === '');
    for (const c of row) for (let k = c.indexOf('\n'); k >= 0; k = c.indexOf('\n', k + 1)) line++;
    line++;
  }
}

const POW10 = Array.from({ length: 23 }, (_, k) => 10 ** k);

/**
 * Decimal number in bytes [a, b) (blanks around it allowed) when it has at most 15 significant digits and
 * a power of ten up to 10^22: then m / 10^k (or m·10^k) of two exactly representable doubles is the
 * correctly rounded value (Clinger (1990), "How to read floating point numbers accurately", PLDI).
 * NaN otherwise, and the caller falls back to Number() on the text.
 */
function fastNumber(buf: Buffer, a: number, b: number): number {
  while (a < b && (buf[a] === 32 || buf[a] === 9)) a++;
  while (b > a && (buf[b - 1] === 32 || buf[b - 1] === 9)) b--;
  if (a === b) return Number.NaN;
  let i = a;
  let neg = false;
  if (buf[i] === 45 || buf[i] === 43) {
    neg = buf[i] === 45;
    i++;
  }
  let mant = 0;
  let digits = 0;
  let scale = 0;
  let seenDigit = false;
  let dot = false;
  for (; i < b; i++) {
    const c = buf[i];
    if (c >= 48 && c <= 57) {
      seenDigit = true;
      if (mant === 0 && c === 48) {
        if (dot) scale--;
        continue;
      }
      if (++digits > 15) return Number.NaN;
      mant = mant * 10 + (c - 48);
      if (dot) scale--;
    } else if (c === 46 && !dot) dot = true;
    else break;
  }
  if (!seenDigit) return Number.NaN;
  if (i < b) {
    if (buf[i] !== 101 && buf[i] !== 69) return Number.NaN;
    i++;
    let eneg = false;
    if (buf[i] === 45 || buf[i] === 43) {
      eneg = buf[i] === 45;
      i++;
    }
    let e = 0;
    const start = i;
    for (; i < b && buf[i] >= 48 && buf[i] <= 57 && e < 1000; i++) e = e * 10 + (buf[i] - 48);
    if (i !== b || i === start) return Number.NaN;
    scale += eneg ? -e : e;
  }
  if (mant === 0) return neg ? -0 : 0;
  if (scale < -22 || scale > 22) return Number.NaN;
  const v = scale < 0 ? mant / POW10[-scale] : mant * POW10[scale];
  if (scale > 0 && v >= 9007199254740992) return Number.NaN;
  return neg ? -v : v;
}

/**
 * Rows of a body without quotes, where a field is everything between delimiters (the header's
 * delimiter, as papaparse detected it): a byte scan that reads numbers in place is several times faster
 * than a general CSV parser on million-row files and keeps no per-cell strings.
 */
function plainCells(body: Buffer, delimiter: string, ti: number, vi: number, take: CellSink): void {
  const delim = Buffer.from(delimiter);
  if (delim.length !== 1) {
    quotedCells(body.toString('utf8'), ti, vi, take);
    return;
  }
  const sep = delim[0];
  const span = [0, 0, 0, 0];
  const cells: RowCells = {
    number: (k) => {
      const a = span[2 * k], b = span[2 * k + 1];
      const v = fastNumber(body, a, b);
      if (!Number.isNaN(v)) return v;
      const t = body.toString('utf8', a, b).trim();
      return t === '' ? Number.NaN : Number(t);
    },
    text: (k) => body.toString('utf8', span[2 * k], span[2 * k + 1]),
  };
  const n = body.length;
  let line = 2;
  let pos = 0;
  while (pos < n) {
    // One pass over the row's bytes: field boundaries, end of line, and whether it is blank.
    let col = 0;
    let fieldStart = pos;
    let blank = true;
    span[0] = span[1] = span[2] = span[3] = -1;
    let i = pos;
    for (; i < n; i++) {
      const c = body[i];
      if (c === 10) break;
      if (c === sep) {
        if (col === ti) {
          span[0] = fieldStart;
          span[1] = i;
        }
        if (col === vi) {
          span[2] = fieldStart;
          span[3] = i;
        }
        col++;
        fieldStart = i + 1;
        blank = false;
      } else if (blank && c !== 32 && c !== 9 && c !== 13) blank = false;
    }
    const stop = i > pos && body[i - 1] === 13 ? i - 1 : i;
    if (col === ti) {
      span[0] = fieldStart;
      span[1] = stop;
    }
    if (col === vi) {
      span[2] = fieldStart;
      span[3] = stop;
    }
    for (let k = 0; k < 4; k += 2) if (span[k] < 0) span[k] = span[k + 1] = stop;
    take(line, cells, blank);
    pos = i + 1;
    line++;
  }
}

/** Where an engine error points: the input line at or after the instant it names. */
function locate(err: AnalysisInputError, table: Table): string {
  const at = err.at;
  let line: number | undefined;
  if (at?.index !== undefined) line = table.lines[at.index];
  else if (at?.time !== undefined) {
    for (let i = 0; i < table.time.length; i++) {
      if (table.time[i] >= at.time && (line === undefined || table.lines[i] < line)) line = table.lines[i];
    }
  }
  const range = line !== undefined ? `line ${line}` : `lines ${table.lines[0]}-${table.lines[table.lines.length - 1]}`;
  return `${range}, column "${table.valueName}"`;
}

/** A break given on the command line: a number or an ISO 8601 instant, read as the time column is. */
function breakTimes(values: string[] | undefined, kind: 'transition' | 'maintenance', numericTime: boolean): { time: number; kind: 'transition' | 'maintenance' }[] {
  return (values ?? []).map((v) => {
    const time = numericTime ? Number(v) : parseIsoInstant(v.trim());
    if (v.trim() === '' || !Number.isFinite(time)) throw new CliInputError(`option --${kind}: '${v}' is not ${numericTime ? 'a number' : 'an ISO 8601 date or date-time'} (as the time column)`);
    return { time, kind };
  });
}

function toJson(result: AnalysisResult, summary: boolean, numericTime: boolean): unknown {
  const when = (v: number): number | string => (numericTime ? v : new Date(v).toISOString());
  const { quality } = result;
  const times = {
    shifts: result.shifts.map((s) => ({ time: when(s.time), index: s.index })),
    stretch: { ...result.stretch, from: when(result.stretch.from), to: when(result.stretch.to) },
    quality: {
      ...quality,
      flatRuns: quality.flatRuns.map((r) => ({ ...r, from: when(r.from), to: when(r.to) })),
      samplingChanges: quality.samplingChanges.map((c) => ({ ...c, time: when(c.time) })),
    },
  };
  if (summary) {
    const s = summarizeAnalysis(result);
    const latest = Object.fromEntries(Object.entries(s.latest).map(([k, v]) => [k, v && { ...v, time: when(v.time) }]));
    return { ...s, ...times, latest };
  }
  const t = result.series.time;
  return {
    ...result,
    ...times,
    series: {
      time: Array.from(t, when),
      value: Array.from(result.series.value),
      trend: Array.from(result.series.trend),
      residual: Array.from(result.series.residual),
    },
  };
}

async function main(): Promise<number> {
  const argv = process.argv.slice(2);
  let file = argv.find((a) => !a.startsWith('--')) ?? '(no file)';
  let table: Table | undefined;
  try {
    const args = parseArgs(argv);
    file = args.file;
    const settings = settingsFrom(args.opts, args.flags);
    table = readTable(args.file, args.opts.time, args.opts.value);
    const breaks = [...breakTimes(args.repeated.transition, 'transition', table.numericTime), ...breakTimes(args.repeated.maintenance, 'maintenance', table.numericTime)];
    const result = await runAnalysis({ time: table.time, value: table.value, timeKind: table.numericTime ? 'numeric' : 'utc-ms', breaks }, settings);
    process.stdout.write(`${JSON.stringify(toJson(result, args.flags.has('summary'), table.numericTime))}\n`);
    return 0;
  } catch (e) {
    if (e instanceof CliInputError) {
      process.stderr.write(`${file}: ${e.message}\n`);
      return 2;
    }
    if (e instanceof AnalysisInputError) {
      process.stderr.write(`${file}: ${table ? locate(e, table) : 'input'}: ${e.message}\n`);
      return 2;
    }
    if (e instanceof ZodError) {
      process.stderr.write(`${file}: ${e.issues[0]?.message ?? 'invalid settings'}\n`);
      return 2;
    }
    throw e;
  }
}

main().then(
  (code) => {
    process.exitCode = code;
  },
  (e) => {
    process.stderr.write(`analyze: unexpected error: ${(e as Error).stack ?? e}\n`);
    process.exitCode = 1;
  },
);
