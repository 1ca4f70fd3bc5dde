import { Readable } from 'node:stream';
import iconv from 'iconv-lite';
import Papa from 'papaparse';
import type { Delimiter } from './choices';

/** Order of preference when several delimiters split the sample equally well: a file with consistent semicolons is semicolon-delimited even if its values contain commas (comma decimals). */
const DELIMITERS: readonly Delimiter[] = ['\t', ';', '|', ','];
/** A time,value line is well under 100 characters; anything this long is not a record but a broken or hostile file. */
export const MAX_LINE_CHARS = 65_536;
const SNIFF_CHARS = 65_536;
/** Bytes looked at to choose the encoding of a file without a byte order mark. */
const SNIFF_BYTES = 65_536;
const SNIFF_LINES = 20;

/** CSV text, the bytes of a whole body (push, upload), or a byte/text stream (drop files). */
export type CsvInput = string | Uint8Array | AsyncIterable<Uint8Array | string>;

/** A problem with the file as a whole: nothing in it can be read as rows. */
export class CsvFileError extends Error {
  constructor(
    readonly code: 'empty' | 'binary' | 'compressed' | 'line-too-long' | 'header-only' | 'no-data' | 'missing-column' | 'single-column',
    message: string,
  ) {
    super(message);
    this.name = 'CsvFileError';
  }
}

export interface CsvLayout {
  delimiter: Delimiter;
  /** False when no candidate split the sample into two or more columns (the file may use another delimiter). */
  delimiterDetected: boolean;
  encoding: 'utf-8' | 'utf-16le' | 'utf-16be' | 'windows-1252';
  bom: boolean;
  /** Most common number of fields per line in the sample. */
  fieldCount: number;
  header: string[] | null;
}

export interface CsvStats {
  dataRows: number;
  blankLines: number;
  commentLines: number;
}

export interface CsvReadOptions {
  delimiter?: Delimiter;
  /** 'auto': the first record is a header unless `looksLikeData` says it is a record. */
  header?: boolean | 'auto';
  looksLikeData?: (fields: string[]) => boolean;
  /** Called once the layout (delimiter, header) is known, before the first data row. */
  onLayout?: (layout: CsvLayout) => void;
  /** Each data record with its 1-based line number; `problem` is set when the record itself is malformed (quotes). */
  onRow: (fields: string[], line: number, problem?: string) => void;
}

async function* chunksOf(input: CsvInput): AsyncGenerator<Uint8Array | string> {
  if (typeof input === 'string') {
    // Slices keep the line-length guard and papaparse working on bounded pieces even for one huge string.
    for (let i = 0; i < input.length; i += SNIFF_CHARS) yield input.slice(i, i + SNIFF_CHARS);
  } else if (input instanceof Uint8Array) {
    for (let i = 0; i < input.length; i += SNIFF_BYTES) yield input.subarray(i, i + SNIFF_BYTES);
  } else {
    yield* input;
  }
}

function concatBytes(a: Uint8Array, b: Uint8Array): Uint8Array {
  const out = new Uint8Array(a.length + b.length);
  out.set(a, 0);
  out.set(b, a.length);
  return out;
}

/** The encoding a leading byte order mark names (Unicode Standard, ch. 23.8 "Specials": EF BB BF, FF FE, FE FF); UTF-8 without one. */
function byteOrderMark(head: Uint8Array): { bom: boolean; encoding: CsvLayout['encoding'] } {
  if (head[0] === 0xef && head[1] === 0xbb && head[2] === 0xbf) return { bom: true, encoding: 'utf-8' };
  if (head[0] === 0xff && head[1] === 0xfe) return { bom: true, encoding: 'utf-16le' };
  if (head[0] === 0xfe && head[1] === 0xff) return { bom: true, encoding: 'utf-16be' };
  return { bom: false, encoding: 'utf-8' };
}

/**
 * The encoding to read a file with, from its first bytes: the one its byte order mark names; else UTF-8 when
 * those bytes are well-formed UTF-8 (WHATWG Encoding Standard, §4 and the UTF-8 decoder's error mode), and
 * otherwise Windows-1252, which older spreadsheet and logger exports in Western European languages write (a
 * degree sign or an accented site name is one byte there and malformed as UTF-8). `complete` says the bytes are
 * the whole file, so a sequence cut off at the end is an error rather than the start of the next chunk.
 */
export function chooseEncoding(head: Uint8Array, complete: boolean): { bom: boolean; encoding: CsvLayout['encoding'] } {
  const mark = byteOrderMark(head);
  if (mark.bom) return mark;
  try {
    new TextDecoder('utf-8', { fatal: true }).decode(head.subarray(0, SNIFF_BYTES), { stream: !complete || head.length > SNIFF_BYTES });
    return mark;
  } catch {
    return { bom: false, encoding: 'windows-1252' };
  }
}

/**
 * Decodes the input to text in the encoding `chooseEncoding` picks from the first 64 KiB; a byte order mark is
 * dropped. Gzip and zip signatures are refused with a message, since such a file is an archive of a CSV rather
 * than a CSV.
 */
async function* decode(input: CsvInput, layout: Pick<CsvLayout, 'encoding' | 'bom'>): AsyncGenerator<string> {
  const source = chunksOf(input)[Symbol.asyncIterator]();
  let head: Uint8Array = new Uint8Array(0);
  let first: IteratorResult<Uint8Array | string>;
  for (;;) {
    first = await source.next();
    if (first.done) break;
    if (typeof first.value === 'string') break;
    head = concatBytes(head, first.value);
    if (head.length >= SNIFF_BYTES) break;
  }
  if (!first.done && typeof first.value === 'string') {
    // Text input: already decoded; only a leading BOM character may remain.
    let text = first.value;
    if (text.charCodeAt(0) === 0xfeff) {
      layout.bom = true;
      text = text.slice(1);
    }
    yield text;
    for (let next = await source.next(); !next.done; next = await source.next()) yield String(next.value);
    return;
  }
  if (head[0] === 0x1f && head[1] === 0x8b) throw new CsvFileError('compressed', 'The file is gzip-compressed. Unpack it and send the CSV inside.');
  if (head[0] === 0x50 && head[1] === 0x4b && head[2] === 0x03 && head[3] === 0x04) {
    throw new CsvFileError('compressed', 'The file is a zip archive (or a spreadsheet such as .xlsx). Export or unpack it as CSV text.');
  }
  const mark = chooseEncoding(head, first.done === true);
  layout.bom = mark.bom;
  layout.encoding = mark.encoding;
  const decoder = streamDecoder(layout.encoding);
  if (head.length) yield decoder.write(head);
  for (let next = await source.next(); !next.done; next = await source.next()) {
    yield typeof next.value === 'string' ? next.value : decoder.write(next.value);
  }
  const tail = decoder.end();
  if (tail) yield tail;
}

/**
 * A decoder that keeps a character cut between chunks for the next one. Windows-1252 goes through iconv-lite:
 * Node's own TextDecoder (v20) reads bytes 0x80–0x9F of that encoding as C1 controls instead of €, – and the
 * other characters the WHATWG index gives them; UTF-8 and UTF-16 use the built-in decoder (the mark, if any,
 * is dropped by both).
 */
function streamDecoder(encoding: CsvLayout['encoding']): { write(bytes: Uint8Array): string; end(): string } {
  if (encoding === 'windows-1252') {
    const decoder = iconv.getDecoder('windows-1252');
    return { write: (bytes) => decoder.write(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength)), end: () => decoder.end() ?? '' };
  }
  const decoder = new TextDecoder(encoding);
  return { write: (bytes) => decoder.decode(bytes, { stream: true }), end: () => decoder.decode() };
}

/** NUL bytes, undecodable bytes (U+FFFD) or more than 1 % control characters: not a text file. */
function binaryProblem(sample: string): string | null {
  let bad = 0;
  let nul = 0;
  for (let i = 0; i < sample.length; i++) {
    const c = sample.charCodeAt(i);
    if (c === 0) nul++;
    if (c === 0xfffd || (c < 0x20 && c !== 0x09 && c !== 0x0a && c !== 0x0d) || c === 0x7f) bad++;
  }
  if (nul > 0 || bad > sample.length * 0.01) {
    return `The file looks like binary data, not CSV text (${bad} control or undecodable characters in the first ${sample.length} characters). Export the data as UTF-8 CSV.`;
  }
  return null;
}

/** The usual record starts with a printable character other than `#`: neither blank nor a comment, decided without trimming. */
const plainStart = (fields: string[]) => fields[0].length > 0 && fields[0].charCodeAt(0) > 32 && fields[0].charCodeAt(0) !== 35;
const isBlank = (fields: string[]) => !plainStart(fields) && fields.every((f) => f.trim() === '');
const isComment = (fields: string[]) => fields.length > 0 && !plainStart(fields) && fields[0].trimStart().startsWith('#');

/** Picks the delimiter that splits the sample's records into the same number (≥ 2) of fields, preferring DELIMITERS' order. */
function detectDelimiter(sample: string, complete: boolean): { delimiter: Delimiter; detected: boolean; fieldCount: number } {
  let lines = sample.split(/\r\n|\n|\r/);
  if (!complete) lines = lines.slice(0, -1);
  lines = lines.filter((line) => line.trim() !== '' && !line.trimStart().startsWith('#')).slice(0, SNIFF_LINES);
  let fallback: { delimiter: Delimiter; fieldCount: number; share: number } | null = null;
  for (const delimiter of DELIMITERS) {
    const counts = Papa.parse<string[]>(lines.join('\n'), { delimiter }).data.map((row) => row.length);
    if (counts.length === 0) continue;
    const tally = new Map<number, number>();
    for (const c of counts) tally.set(c, (tally.get(c) ?? 0) + 1);
    const [mode, hits] = [...tally].sort((a, b) => b[1] - a[1] || b[0] - a[0])[0];
    if (mode < 2) continue;
    if (hits === counts.length) return { delimiter, detected: true, fieldCount: mode };
    if (!fallback || hits / counts.length > fallback.share) fallback = { delimiter, fieldCount: mode, share: hits / counts.length };
  }
  if (fallback) return { delimiter: fallback.delimiter, detected: true, fieldCount: fallback.fieldCount };
  return { delimiter: ',', detected: false, fieldCount: lines.length ? 1 : 0 };
}

/**
 * Length of the leading block of blank and `#` comment lines (its last line break included), in code units of
 * `at` (characters of a string, bytes of an ASCII-compatible byte input, after a UTF-8 byte order mark). Nothing
 * before it can open a quoted field, so its lines are comments for sure, whatever characters they hold. O(length).
 */
function preambleLength(length: number, at: (i: number) => number): number {
  let i = length >= 3 && at(0) === 0xef && at(1) === 0xbb && at(2) === 0xbf ? 3 : 0;
  let end = 0;
  while (i < length) {
    let j = i;
    while (j < length && (at(j) === 32 || at(j) === 9)) j++;
    const c = j < length ? at(j) : -1;
    if (c !== 35 && c !== 10 && c !== 13) break;
    while (j < length && at(j) !== 10) j++;
    if (j === length) break; // an unfinished last line is left to the reader
    i = end = j + 1;
  }
  return end;
}

/**
 * The sample with every comment line of its leading block cut to its `#` (line breaks kept, so line numbers hold):
 * such a line may hold JSON, whose double quotes papaparse would otherwise read as the start of a quoted field
 * running into the data (an analysis's download starts with `# settings: {...}`).
 */
function quietPreamble(sample: string): { text: string; length: number } {
  const length = preambleLength(sample.length, (i) => sample.charCodeAt(i));
  const head = sample.slice(0, length).replace(/^([ \t]*#)[^\r\n]*/gm, '$1');
  return { text: head + sample.slice(length), length };
}

/**
 * True when a whole input has no double quote and its line breaks are all LF or all CRLF (no lone CR): then
 * papaparse's records are its lines and its fields the text between delimiters. O(n) over the bytes or characters.
 */
function unquotedLines(whole: string | Uint8Array): boolean {
  const input =
    typeof whole === 'string'
      ? whole.slice(preambleLength(whole.length, (i) => whole.charCodeAt(i)))
      : whole.subarray(preambleLength(whole.length, (i) => whole[i]));
  if (input instanceof Uint8Array) {
    const bytes = Buffer.from(input.buffer, input.byteOffset, input.byteLength);
    // The usual case, LF only, is decided by native scans.
    if (bytes.indexOf(34) !== -1) return false;
    if (bytes.indexOf(13) === -1) return true;
  }
  let lf = 0;
  let cr = 0;
  let crlf = 0;
  for (let i = 0; i < input.length; i++) {
    const c = typeof input === 'string' ? input.charCodeAt(i) : input[i];
    if (c === 34) return false;
    if (c === 10) {
      lf++;
      if (i > 0 && (typeof input === 'string' ? input.charCodeAt(i - 1) : input[i - 1]) === 13) crlf++;
    } else if (c === 13) cr++;
  }
  return cr === 0 || (cr === crlf && lf === crlf);
}

/**
 * Reads a CSV streaming (papaparse over a Node stream): detects encoding, binary content and the delimiter from
 * the first 64 K characters, refuses a line longer than MAX_LINE_CHARS before papaparse buffers it, skips blank
 * lines and `#` comment lines (counting them; those of the leading block may hold any characters, quotes too), decides whether the first record is a header, and hands every data
 * record to `onRow` with its line number. Line numbers count physical lines, including those inside quoted fields.
 * Memory is bounded by one chunk plus one record. Throws CsvFileError for problems of the file as a whole.
 */
export async function readCsv(input: CsvInput, options: CsvReadOptions): Promise<{ layout: CsvLayout; stats: CsvStats }> {
  const layout: CsvLayout = { delimiter: ',', delimiterDetected: true, encoding: 'utf-8', bom: false, fieldCount: 0, header: null };
  const text = decode(input, layout)[Symbol.asyncIterator]();
  let sample = '';
  let ended = false;
  while (sample.length < SNIFF_CHARS) {
    const next = await text.next();
    if (next.done) {
      ended = true;
      break;
    }
    sample += next.value;
  }
  if (sample.trim() === '') throw new CsvFileError('empty', 'The file is empty.');
  sample = quietPreamble(sample).text;
  const binary = binaryProblem(sample.slice(0, SNIFF_CHARS));
  if (binary) throw new CsvFileError('binary', binary);
  const detected = detectDelimiter(sample, ended);
  layout.delimiter = options.delimiter ?? detected.delimiter;
  layout.delimiterDetected = options.delimiter ? true : detected.detected;
  layout.fieldCount = detected.fieldCount;

  async function* guarded(): AsyncGenerator<string> {
    let line = 1;
    let length = 0;
    const check = (chunk: string) => {
      let from = 0;
      for (;;) {
        const nl = chunk.indexOf('\n', from);
        const piece = (nl === -1 ? chunk.length : nl) - from;
        if (length + piece > MAX_LINE_CHARS) {
          throw new CsvFileError(
            'line-too-long',
            `Line ${line} is longer than ${MAX_LINE_CHARS.toLocaleString('en-US')} characters; a CSV record of time and value is far shorter, so the file is not read.`,
          );
        }
        if (nl === -1) {
          length += piece;
          return;
        }
        line++;
        length = 0;
        from = nl + 1;
      }
    };
    check(sample);
    yield sample;
    if (ended) return;
    for (let next = await text.next(); !next.done; next = await text.next()) {
      check(next.value);
      yield next.value;
    }
  }

  const stats: CsvStats = { dataRows: 0, blankLines: 0, commentLines: 0 };
  let line = 1;
  let first = true;
  let failure: unknown = null;
  // A whole input (not a stream) can be checked ahead for quotes.
  const whole = typeof input === 'string' || input instanceof Uint8Array;
  if (whole && unquotedLines(input)) {
    // No quotes and one kind of line break: a record is a line and a field what lies between delimiters, exactly
    // what papaparse would make of it, found without its per-character state machine (several times faster on
    // million-row files).
    let carry = '';
    for await (const chunk of guarded()) {
      const text = carry + chunk;
      let from = 0;
      for (let nl = text.indexOf('\n'); nl !== -1; nl = text.indexOf('\n', from)) {
        handle(text.slice(from, nl > from && text.charCodeAt(nl - 1) === 13 ? nl - 1 : nl).split(layout.delimiter), []);
        from = nl + 1;
      }
      carry = text.slice(from);
    }
    // As papaparse streams it: a last line without a line break is a record; nothing after a final break is.
    if (carry !== '') handle(carry.split(layout.delimiter), []);
    return finish();
  }
  const stream = Readable.from(guarded());
  await new Promise<void>((resolve, reject) => {
    Papa.parse<string[]>(stream, {
      delimiter: layout.delimiter,
      skipEmptyLines: false,
      step: (results, parser) => {
        if (failure) return;
        try {
          handle(results.data, results.errors);
        } catch (error) {
          // A callback's error (e.g. a missing column found at the header) ends the read; papaparse would swallow it.
          failure = error;
          parser.abort();
          stream.destroy();
        }
      },
      complete: () => (failure ? reject(failure) : resolve()),
      error: (error: Error) => reject(failure ?? error),
    });
  });
  return finish();

  function finish(): { layout: CsvLayout; stats: CsvStats } {
    if (stats.dataRows === 0) {
      if (layout.header) throw new CsvFileError('header-only', 'The file has a header line but no data rows.');
      throw new CsvFileError('no-data', 'The file has no data rows (only blank or comment lines).');
    }
    return { layout, stats };
  }

  function handle(fields: string[], errors: Papa.ParseError[]): void {
    const here = line;
    let spanned = 0;
    for (const field of fields) {
      for (let at = field.indexOf('\n'); at !== -1; at = field.indexOf('\n', at + 1)) spanned++;
    }
    line += 1 + spanned;
    if (isBlank(fields)) {
      stats.blankLines++;
      return;
    }
    if (isComment(fields)) {
      stats.commentLines++;
      return;
    }
    if (first) {
      first = false;
      const header = options.header === true || (options.header !== false && !(options.looksLikeData?.(fields) ?? true));
      if (header) layout.header = fields.map((f) => f.trim());
      options.onLayout?.(layout);
      if (header) return;
    }
    stats.dataRows++;
    const problem = errors.length ? `malformed quotes (${errors[0].message})` : undefined;
    options.onRow(fields, here, problem);
  }
}
