/**
 * Command line for the indicator engine:
 *   npm run --silent analyze -- FILE.csv [--time COLUMN] [--value COLUMN] [--detrend METHOD] [--bandwidth EXTENT]
 *     [--window EXTENT] [--span EXTENT] [--indicators a,b] [--surrogates N] [--surrogate-method ar1|phase] [--seed S]
 *     [--seasonal none|month|day-of-year] [--log] [--max-gap N] [--gap-policy error|latest-stretch]
 *     [--min-coverage F] [--sampling-change start-after|subsample] [--shift-detection on|off]
 *     [--moving-average-width N] [--tipping-point TIME]... [--maintenance TIME]... [--sensitivity] [--summary]
 *     [--time-format iso8601|date|epoch-seconds|epoch-milliseconds|decimal-year|age-years-bp|age-kyr-bp|number]
 *     [--time-zone IANA-ZONE] [--interval-ms N]
 *   npm run --silent analyze -- FILE.csv --multivariate --value a,b,c [--time COLUMN] [--detrend ...] [--window EXTENT] ...
 *     site-level indicators (pc1-variance, pc1-share, maf-ac1) of several value columns sharing the time column.
 * An EXTENT is a fraction of the analysed stretch, "<n> points" or an ISO 8601 duration (P90D, P2Y, PT12H).
 * Prints the analysis as JSON on stdout. Bad input: exit code 2, one line on stderr, nothing on stdout.
 * The file is read by the intake's reader (lib/intake), as an upload of a series with that time format and zone
 * would be: without --time-format, ISO 8601, or plain numbers when the time column's first cell is a number;
 * --time-zone (default UTC) places ISO times without an offset. `series.time`, `stretch`, `shifts` and the quality
 * findings' instants are written as the time column is: the numbers themselves for plain numbers, ISO 8601 UTC
 * strings otherwise (±YYYYYY years outside 0000–9999).
 * A file that starts with `# settings: {...}` and `# input: {"intervalMs", "breaks"}` lines (an analysis's download,
 * GET /api/snapshots/{id}/data.csv) is analysed with those settings, interval and breaks; options override them.
 * With --multivariate, a `# site: {"detrending", "intervalMs"}` line (a site analysis's download,
 * GET /api/site-snapshots/{id}/data.csv) gives each column's own detrending and the grid step.
 */
import { readFileSync } from 'node:fs';
import { ZodError } from 'zod';
import {
  AnalysisInputError,
  analysisSettingsSchema,
  runAnalysis,
  runSiteAnalysis,
  summarizeAnalysis,
  type AnalysisResult,
  type RecordBreak,
  type SiteAnalysisResult,
} from '../lib/engine';
import { CsvFileError, readCsv } from '../lib/intake/csv';
import { collectCsvRows } from '../lib/intake/rows';
import { formatInstant, parseTime, type TimeReading } from '../lib/intake/time-formats';
import { TIME_FORMATS, seriesFieldsSchema } from '../lib/schemas/series';

class CliInputError extends Error {}

/** The intake's time formats, and plain numbers (no calendar). */
const TIME_READINGS: readonly TimeReading[] = [...TIME_FORMATS, 'number'];

const FLAGS = new Set(['sensitivity', 'summary', 'log', 'multivariate']);
const OPTIONS = new Set([
  'time',
  'value',
  'detrend',
  'bandwidth',
  'window',
  'span',
  'indicators',
  'surrogates',
  'surrogate-method',
  'seed',
  'seasonal',
  'max-gap',
  'gap-policy',
  'min-coverage',
  'sampling-change',
  'shift-detection',
  'moving-average-width',
  'time-format',
  'time-zone',
  'interval-ms',
]);
/** Options that may be given more than once (each adds a break). */
const REPEATED = new Set(['tipping-point', 'maintenance']);
/** Former option names still read for one release (`--transition` was renamed with the marks). */
const RENAMED: Record<string, string> = { transition: 'tipping-point' };

function parseArgs(argv: string[]): { file: string; opts: Record<string, string>; flags: Set<string>; repeated: Record<string, string[]> } {
  const opts: Record<string, string> = {};
  const repeated: Record<string, string[]> = {};
  const flags = new Set<string>();
  let file: string | undefined;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a.startsWith('--')) {
      const [given, inline] = a.slice(2).split(/=(.*)/s, 2);
      const key = RENAMED[given] ?? given;
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
  if (!file)
    throw new CliInputError('usage: analyze FILE.csv [--time COLUMN] [--value COLUMN] [--time-format FORMAT] [--time-zone ZONE] [--detrend ...] [--summary]');
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

/**
 * Settings from the options over those the file carries (`# settings:`): an option given wins, a setting given by
 * neither takes the engine's default. Flags count only when present, so a file's `logTransform: true` stands unless
 * overridden by an explicit setting.
 */
function settingsFrom(opts: Record<string, string>, flags: Set<string>, fromFile: Record<string, unknown>) {
  const options = {
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
    logTransform: flags.has('log') || undefined,
    maxGap: numberOption(opts, 'max-gap'),
    gapPolicy: opts['gap-policy'],
    minCoverage: numberOption(opts, 'min-coverage'),
    samplingChange: opts['sampling-change'],
    shiftDetection: opts['shift-detection'],
    sensitivity: flags.has('sensitivity') || undefined,
  };
  const given = Object.fromEntries(Object.entries(options).filter(([, v]) => v !== undefined));
  const parsed = analysisSettingsSchema.safeParse({ ...fromFile, ...given });
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const field = String(issue.path[0] ?? '');
    const flag = field.replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`);
    throw new CliInputError(`option --${flag}: ${issue.message}`);
  }
  return parsed.data;
}

/** What a download of an analysis carries in its leading `#` lines (lib/analysis/provenance.ts writes them). */
interface FileHeader {
  settings: Record<string, unknown>;
  intervalMs?: number;
  breaks: { time: string; kind: 'tipping-point' | 'maintenance' }[];
  /** a site analysis's download: each column's detrending, and the grid step */
  site?: { detrending?: unknown; intervalMs?: unknown };
}

/**
 * Reads `# settings: {...}` and `# input: {...}` from the comment lines before the first record, so an analysis's
 * download reproduces it with no options. Other comment lines are notes for people and are skipped, as the
 * intake's reader skips them.
 */
function fileHeader(bytes: Buffer): FileHeader {
  const header: FileHeader = { settings: {}, breaks: [] };
  const head = bytes
    .subarray(0, 1 << 20)
    .toString('utf8')
    .split(/\r?\n/);
  for (const line of head) {
    if (!line.startsWith('#')) break;
    const match = /^#\s*(settings|input|site):\s*(\{.*\})\s*$/.exec(line);
    if (!match) continue;
    let parsed: unknown;
    try {
      parsed = JSON.parse(match[2]);
    } catch {
      throw new CliInputError(`the file's "# ${match[1]}:" line is not valid JSON`);
    }
    if (match[1] === 'settings') header.settings = parsed as Record<string, unknown>;
    else if (match[1] === 'site') header.site = parsed as FileHeader['site'];
    else {
      const input = parsed as { intervalMs?: unknown; breaks?: unknown };
      if (typeof input.intervalMs === 'number') header.intervalMs = input.intervalMs;
      if (Array.isArray(input.breaks)) header.breaks = input.breaks as FileHeader['breaks'];
    }
  }
  return header;
}

interface Table {
  time: Float64Array;
  value: Float64Array;
  numericTime: boolean;
  lines: Int32Array;
  valueName: string;
  format: TimeReading;
  zone: string;
}

/** Raised to stop reading after the first data record. */
class Enough extends Error {}

/**
 * The first data cell of the time column (a header is always read), from the file's first 64 KiB through the
 * intake's reader; undefined when there is none there, and the full read then says what is wrong.
 */
async function firstTimeCell(bytes: Buffer, column: string | undefined): Promise<string | undefined> {
  let index = 0;
  let cell: string | undefined;
  try {
    await readCsv(bytes.subarray(0, 65_536), {
      header: true,
      onLayout: (layout) => {
        if (column !== undefined) index = layout.header?.findIndex((h) => h.toLowerCase() === column.toLowerCase()) ?? -1;
      },
      onRow: (fields) => {
        cell = fields[index];
        throw new Enough();
      },
    });
  } catch {
    // Enough, or a file-level problem the full read reports.
  }
  return cell;
}

/**
 * Reads the file through the intake's reader, as an upload of a series with this time format and zone would be read
 * (encoding, delimiter, header, sorting, duplicates). Without --time-format, the time column is ISO 8601, or plain
 * numbers when its first cell is a number. Any rejected row or file-level problem stops the command.
 */
async function readTable(bytes: Buffer, opts: Record<string, string>): Promise<Table> {
  const zoneCheck = seriesFieldsSchema.shape.timeZone.safeParse(opts['time-zone'] ?? 'UTC');
  if (!zoneCheck.success) throw new CliInputError(`option --time-zone: '${opts['time-zone']}': ${zoneCheck.error.issues[0].message}`);
  const zone = zoneCheck.data;
  const given = opts['time-format'];
  if (given !== undefined && !TIME_READINGS.includes(given as TimeReading)) {
    throw new CliInputError(`option --time-format: '${given}' is not one of ${TIME_READINGS.join(', ')}`);
  }
  let format = given as TimeReading | undefined;
  if (format === undefined) {
    const cell = await firstTimeCell(bytes, opts.time);
    format = cell !== undefined && parseTime(cell, 'number', zone).ok ? 'number' : 'iso8601';
  }
  const valueColumn = opts.value ?? 1;
  let rows;
  try {
    rows = await collectCsvRows(bytes, { timeColumn: opts.time ?? 0, valueColumn, timeFormat: format, header: true }, zone);
  } catch (e) {
    if (!(e instanceof CsvFileError)) throw e;
    // The contract names a line and column wherever there is one: a missing column is the header's (line 1).
    const missing = e.code === 'missing-column' ? /column "([^"]*)"/.exec(e.message)?.[1] : undefined;
    throw new CliInputError(missing !== undefined ? `line 1, column "${missing}": ${e.message}` : e.message);
  }
  if (rows.rejectedCount > 0) {
    const first = rows.rejectedRows.reduce((a, b) => (b.line < a.line ? b : a));
    const more = rows.rejectedCount > 1 ? ` (${rows.rejectedCount - 1} more row${rows.rejectedCount > 2 ? 's' : ''} rejected)` : '';
    throw new CliInputError(`line ${first.line}${first.column === null ? '' : `, column "${first.column}"`}: ${first.reason}${more}`);
  }
  const valueName = typeof valueColumn === 'string' ? valueColumn : (rows.layout?.header?.[valueColumn] ?? `column ${valueColumn + 1}`);
  return { time: rows.t, value: rows.value, numericTime: format === 'number', lines: rows.line, valueName, format, zone };
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

function readFile(file: string): Buffer {
  try {
    return readFileSync(file);
  } catch (e) {
    throw new CliInputError(`cannot read file: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
}

/** A break given on the command line or in the file's `# input:` line, read as the time column is (format and zone). */
function breakTime(text: string, kind: 'tipping-point' | 'maintenance', table: Table, origin: string): RecordBreak {
  const time = parseTime(text, table.format, table.zone);
  if (!time.ok) throw new CliInputError(`${origin}: ${time.reason} (read as the time column, ${table.format})`);
  return { time: time.t, kind };
}

/** Breaks from the options when any is given, else those the file carries. */
function breaksFrom(repeated: Record<string, string[]>, header: FileHeader, table: Table): RecordBreak[] {
  const given = (['tipping-point', 'maintenance'] as const).flatMap((kind) => (repeated[kind] ?? []).map((v) => breakTime(v, kind, table, `option --${kind}`)));
  if (given.length) return given;
  return header.breaks.map((b) => breakTime(b.time, b.kind, table, 'the file\u2019s "# input:" breaks'));
}

function toJson(result: AnalysisResult, summary: boolean, numericTime: boolean): unknown {
  const when = (v: number): number | string => (numericTime ? v : formatInstant(v));
  const { quality } = result;
  const times = {
    shifts: result.shifts.map((s) => ({ time: when(s.time), index: s.index, size: s.size })),
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

/**
 * The site-level analysis of several value columns (--multivariate --value a,b,c): each column read as a single
 * series is, and every column must have a value at every instant of the first (same times, same order).
 */
async function siteJson(
  bytes: Buffer,
  opts: Record<string, string>,
  settings: ReturnType<typeof settingsFrom>,
  site: FileHeader['site'],
  summary: boolean,
): Promise<unknown> {
  const names = (opts.value ?? '')
    .split(',')
    .map((v) => v.trim())
    .filter(Boolean);
  if (names.length < 2) throw new CliInputError('option --multivariate needs --value with two or more columns, e.g. --value a,b,c');
  const tables: Table[] = [];
  for (const name of names) tables.push(await readTable(bytes, { ...opts, value: name }));
  const [first] = tables;
  for (const t of tables.slice(1)) {
    const differs = t.time.length !== first.time.length ? Math.min(t.time.length, first.time.length) : t.time.findIndex((v, i) => v !== first.time[i]);
    if (differs >= 0)
      throw new CliInputError(
        `line ${t.lines[differs] ?? first.lines[differs]}, column "${t.valueName}": every value column needs a value at every instant of column "${first.valueName}"`,
      );
  }
  const detrending = site?.detrending;
  if (detrending !== undefined && detrending !== null && (!Array.isArray(detrending) || detrending.length !== names.length))
    throw new CliInputError(
      `the file's "# site:" line gives detrending for ${Array.isArray(detrending) ? detrending.length : 'no'} columns, not ${names.length}`,
    );
  const interval = numberOption(opts, 'interval-ms') ?? (typeof site?.intervalMs === 'number' ? site.intervalMs : undefined);
  const result: SiteAnalysisResult = runSiteAnalysis(
    {
      values: tables.map((t) => t.value),
      timeKind: first.numericTime ? 'numeric' : 'utc-ms',
      ...(interval === undefined ? {} : { interval }),
      ...(Array.isArray(detrending)
        ? {
            detrending: detrending.map((d) => {
              const { detrend, bandwidth, movingAverageWidth } = analysisSettingsSchema.parse(d);
              return { detrend, bandwidth, movingAverageWidth };
            }),
          }
        : {}),
    },
    settings,
  );
  return { series: names, ...(summary ? { ...result, indicators: undefined } : result) };
}

async function main(): Promise<number> {
  const argv = process.argv.slice(2);
  let file = argv.find((a) => !a.startsWith('--')) ?? '(no file)';
  let table: Table | undefined;
  try {
    const args = parseArgs(argv);
    file = args.file;
    const bytes = readFile(args.file);
    const header = fileHeader(bytes);
    const settings = settingsFrom(args.opts, args.flags, header.settings);
    if (args.flags.has('multivariate')) {
      process.stdout.write(`${JSON.stringify(await siteJson(bytes, args.opts, settings, header.site, args.flags.has('summary')))}\n`);
      return 0;
    }
    table = await readTable(bytes, args.opts);
    const breaks = breaksFrom(args.repeated, header, table);
    const intervalMs = numberOption(args.opts, 'interval-ms') ?? header.intervalMs;
    const timeKind = table.numericTime ? 'numeric' : 'utc-ms';
    const result = await runAnalysis({ time: table.time, value: table.value, timeKind, breaks, ...(intervalMs === undefined ? {} : { intervalMs }) }, settings);
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
