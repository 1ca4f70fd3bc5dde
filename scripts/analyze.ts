/**
 * Command line for the indicator engine:
 *   npm run --silent analyze -- FILE.csv [--time COLUMN] [--value COLUMN] [--detrend METHOD] [--bandwidth F]
 *     [--window F] [--indicators a,b] [--surrogates N] [--surrogate-method ar1|phase] [--seed S]
 *     [--sensitivity] [--summary]
 * Prints the analysis as JSON on stdout. Bad input: exit code 2, one line on stderr, nothing on stdout.
 * `series.time` holds the grid instants: the numbers themselves when the time column is numeric, ISO 8601
 * UTC strings when it holds dates (ISO 8601 without an offset is read as UTC).
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

const FLAGS = new Set(['sensitivity', 'summary']);
const OPTIONS = new Set(['time', 'value', 'detrend', 'bandwidth', 'window', 'indicators', 'surrogates', 'surrogate-method', 'seed']);

function parseArgs(argv: string[]): { file: string; opts: Record<string, string>; flags: Set<string> } {
  const opts: Record<string, string> = {};
  const flags = new Set<string>();
  let file: string | undefined;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a.startsWith('--')) {
      const [key, inline] = a.slice(2).split(/=(.*)/s, 2);
      if (FLAGS.has(key)) flags.add(key);
      else if (OPTIONS.has(key)) {
        const v = inline ?? argv[++i];
        if (v === undefined) throw new CliInputError(`option --${key} needs a value`);
        opts[key] = v;
      } else throw new CliInputError(`unknown option ${a}`);
    } else if (file === undefined) file = a;
    else throw new CliInputError(`unexpected argument ${a}`);
  }
  if (!file) throw new CliInputError('usage: analyze FILE.csv [--time COLUMN] [--value COLUMN] [--detrend ...] [--summary]');
  return { file, opts, flags };
}

function numberOption(opts: Record<string, string>, key: string): number | undefined {
  if (opts[key] === undefined) return undefined;
  const v = Number(opts[key]);
  if (opts[key].trim() === '' || !Number.isFinite(v)) throw new CliInputError(`option --${key}: '${opts[key]}' is not a number`);
  return v;
}

function settingsFrom(opts: Record<string, string>, flags: Set<string>) {
  const raw = {
    detrend: opts.detrend,
    bandwidth: numberOption(opts, 'bandwidth'),
    window: numberOption(opts, 'window'),
    indicators: opts.indicators?.split(',').map((s) => s.trim()),
    surrogates: numberOption(opts, 'surrogates'),
    surrogateMethod: opts['surrogate-method'],
    seed: numberOption(opts, 'seed'),
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
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    throw new CliInputError(`cannot read file: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  const headerEnd = text.search(/\r?\n/);
  const head = Papa.parse<string[]>(headerEnd < 0 ? text : text.slice(0, headerEnd));
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
  const body = headerEnd < 0 ? '' : text.slice(headerEnd).replace(/^\r?\n/, '');
  let cap = 1024;
  let time = new Float64Array(cap);
  let value = new Float64Array(cap);
  let lines = new Int32Array(cap);
  let m = 0;
  let numericTime: boolean | undefined;
  const take: CellSink = (line, tCell, vCell, blank) => {
    const ts = tCell.trim();
    const vs = vCell.trim();
    if (blank) return;
    if (ts === '') throw new CliInputError(`line ${line}, column "${timeName}": missing time`);
    let t = Number(ts);
    if (numericTime === undefined) numericTime = Number.isFinite(t) && !ISO.test(ts);
    if (!numericTime) t = parseIsoInstant(ts);
    if (!Number.isFinite(t)) {
      throw new CliInputError(`line ${line}, column "${timeName}": '${ts}' is not ${numericTime ? 'a number' : 'an ISO 8601 date or date-time'}`);
    }
    let v = Number.NaN;
    if (vs !== '') {
      v = Number(vs);
      if (!Number.isFinite(v)) throw new CliInputError(`line ${line}, column "${valueName}": '${vs}' is not a number`);
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
  if (body.includes('"')) quotedCells(body, ti, vi, take);
  else plainCells(body, head.meta.delimiter, ti, vi, take);
  if (m === 0) throw new CliInputError('the file has a header but no data rows');
  return { time: time.subarray(0, m), value: value.subarray(0, m), numericTime: numericTime!, lines: lines.subarray(0, m), timeName, valueName };
}

/** Receives the two wanted cells of each data row, with its physical line number. */
type CellSink = (line: number, time: string, value: string, blank: boolean) => void;

/** Rows of a body with quoted fields: papaparse does the quoting rules. */
function quotedCells(body: string, ti: number, vi: number, take: CellSink): void {
  const parsed = Papa.parse<string[]>(body, { skipEmptyLines: false });
  const bad = parsed.errors.find((e) => e.type !== 'Delimiter');
  if (bad) throw new CliInputError(`line ${(bad.row ?? 0) + 2}: ${bad.message}`);
  // Line numbers count physical lines, so quoted line breaks inside a cell are added back.
  let line = 2;
  for (const row of parsed.data) {
    take(line, row[ti] ?? '', row[vi] ?? '', row.length === 1 && row[0].trim() === '');
    for (const c of row) for (let k = c.indexOf('\n'); k >= 0; k = c.indexOf('\n', k + 1)) line++;
    line++;
  }
}

/**
 * Rows of a body without quotes, where a field is everything between delimiters (the header's
 * delimiter, as papaparse detected it): a plain scan is several times faster than a general CSV parser
 * on million-row files and keeps no per-cell strings alive.
 */
function plainCells(body: string, delimiter: string, ti: number, vi: number, take: CellSink): void {
  const last = Math.max(ti, vi);
  let pos = 0;
  let line = 2;
  while (pos < body.length) {
    let end = body.indexOf('\n', pos);
    if (end < 0) end = body.length;
    const stop = end > pos && body.charCodeAt(end - 1) === 13 ? end - 1 : end;
    let t = '';
    let v = '';
    let start = pos;
    let nonEmpty = false;
    for (let col = 0; col <= last; col++) {
      let next = body.indexOf(delimiter, start);
      if (next < 0 || next > stop) next = stop;
      if (col === ti) t = body.slice(start, next);
      if (col === vi) v = body.slice(start, next);
      if (next > start) nonEmpty = true;
      if (next === stop) break;
      start = next + delimiter.length;
    }
    take(line, t, v, !nonEmpty && body.slice(pos, stop).trim() === '');
    pos = end + 1;
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

function toJson(result: AnalysisResult, summary: boolean, numericTime: boolean): unknown {
  if (summary) return summarizeAnalysis(result);
  const t = result.series.time;
  return {
    ...result,
    series: {
      time: numericTime ? Array.from(t) : Array.from(t, (v) => new Date(v).toISOString()),
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
    const result = await runAnalysis({ time: table.time, value: table.value, timeKind: table.numericTime ? 'numeric' : 'utc-ms' }, settings);
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
