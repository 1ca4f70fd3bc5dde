import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { CsvFileError, MAX_LINE_CHARS, chooseEncoding, readCsv } from '@/lib/intake/csv';
import { collectCsvRows, type IntakeMapping } from '@/lib/intake/rows';
import { formatInstant } from '@/lib/intake/time-formats';

const DIR = path.resolve(__dirname, '../../fixtures/csv');

interface Expectation {
  mapping?: Partial<IntakeMapping>;
  timeZone?: string;
  fileError?: string;
  reasonIncludes?: string;
  notesInclude?: string;
  rowsRead?: number;
  usable?: number;
  duplicatesInInput?: number;
  rejectedLines?: number[];
  times?: string[];
  values?: number[];
}

const expected = JSON.parse(fs.readFileSync(path.join(DIR, 'expected.json'), 'utf8')) as Record<string, Expectation>;
const DEFAULTS: IntakeMapping = { timeColumn: 0, valueColumn: 1, timeFormat: 'iso8601' };

async function outcome(input: Parameters<typeof collectCsvRows>[0], expectation: Expectation) {
  try {
    return { rows: await collectCsvRows(input, { ...DEFAULTS, ...expectation.mapping }, expectation.timeZone ?? 'UTC'), error: null };
  } catch (error) {
    if (error instanceof CsvFileError) return { rows: null, error };
    throw error;
  }
}

describe('bad-CSV corpus (fixtures/csv/expected.json)', () => {
  it('lists an expectation for every fixture file and a file for every expectation', () => {
    const files = fs
      .readdirSync(DIR)
      .filter((f) => f.endsWith('.csv'))
      .sort();
    expect(
      Object.keys(expected)
        .filter((k) => !k.startsWith('_'))
        .sort(),
    ).toEqual(files);
  });

  for (const [file, expectation] of Object.entries(expected)) {
    if (file.startsWith('_')) continue;
    it(file, async () => {
      // Streamed from disk in small chunks, as the drop folder reads it, so chunk boundaries fall inside records.
      const { rows, error } = await outcome(fs.createReadStream(path.join(DIR, file), { highWaterMark: 7 }), expectation);
      if (expectation.fileError) {
        expect(error?.code, `file error of ${file}`).toBe(expectation.fileError);
        if (expectation.reasonIncludes) expect(error!.message).toContain(expectation.reasonIncludes);
        return;
      }
      expect(error).toBeNull();
      const r = rows!;
      if (expectation.rowsRead !== undefined) expect(r.rowsRead).toBe(expectation.rowsRead);
      if (expectation.usable !== undefined) expect(r.t.length).toBe(expectation.usable);
      if (expectation.duplicatesInInput !== undefined) expect(r.duplicatesInInput).toBe(expectation.duplicatesInInput);
      if (expectation.rejectedLines) expect(r.rejectedRows.map((x) => x.line).sort((a, b) => a - b)).toEqual(expectation.rejectedLines);
      expect(r.rowsRead).toBe(r.t.length + r.duplicatesInInput + r.rejectedCount);
      if (expectation.reasonIncludes) expect(r.rejectedRows.map((x) => x.reason).join(' | ')).toContain(expectation.reasonIncludes);
      if (expectation.notesInclude) expect(r.notes.join(' | ')).toContain(expectation.notesInclude);
      if (expectation.times) expect(Array.from(r.t, formatInstant)).toEqual(expectation.times);
      if (expectation.values) expect(Array.from(r.value)).toEqual(expectation.values);
      for (const rejection of r.rejectedRows) expect(rejection.reason.length).toBeGreaterThan(10);
    });
  }

  it('refuses a 10 MB single line before buffering it (generated, not committed)', async () => {
    async function* tenMegabytes() {
      yield 'time,value\n2023-01-01T00:00:00Z,';
      const block = '9'.repeat(1024 * 1024);
      for (let i = 0; i < 10; i++) yield block;
      yield '\n';
    }
    const { error } = await outcome(tenMegabytes(), {});
    expect(error?.code).toBe('line-too-long');
    expect(error!.message).toContain('Line 2');
    expect(error!.message).toContain(MAX_LINE_CHARS.toLocaleString('en-US'));
  });

  it('reads the same rows from a string as from a stream', async () => {
    const text = fs.readFileSync(path.join(DIR, 'quoted-fields.csv'), 'utf8');
    const { rows } = await outcome(text, {});
    expect(Array.from(rows!.line)).toEqual([2, 3, 4, 6]);
  });
});

describe('choosing the encoding of a file without a byte order mark', () => {
  // WHATWG Encoding Standard: the UTF-8 decoder's error handling (§4.1), and the windows-1252 index, where
  // 0xB0 is U+00B0 DEGREE SIGN, 0xE9 is U+00E9 and 0x80 is U+20AC EURO SIGN.
  const bytes = (...values: number[]) => Uint8Array.from(values);
  it('keeps UTF-8 for well-formed UTF-8, and for a sequence cut off at the end of a chunk that is not the last', () => {
    expect(chooseEncoding(bytes(0x54, 0xc2, 0xb0, 0x43), true).encoding).toBe('utf-8'); // "T°C" in UTF-8
    expect(chooseEncoding(bytes(0x54, 0xc2), false).encoding).toBe('utf-8');
  });
  it('reads malformed UTF-8 as Windows-1252', () => {
    expect(chooseEncoding(bytes(0x54, 0xb0, 0x43), true).encoding).toBe('windows-1252');
    expect(chooseEncoding(bytes(0x54, 0xc2), true).encoding).toBe('windows-1252');
  });
  it('decodes the Windows-1252 fixture the same from bytes in memory and from a stream, header included', async () => {
    const file = fs.readFileSync(path.join(DIR, 'good-windows-1252.csv'));
    const headers: (string[] | null)[] = [];
    for (const input of [new Uint8Array(file), fs.createReadStream(path.join(DIR, 'good-windows-1252.csv'), { highWaterMark: 7 })]) {
      const { layout } = await readCsv(input, { header: true, onRow: () => undefined });
      expect(layout.encoding).toBe('windows-1252');
      headers.push(layout.header);
    }
    expect(headers).toEqual([
      ['time', 'temperature (°C)'],
      ['time', 'temperature (°C)'],
    ]);
  });
  it('reads bytes 0x80–0x9F of Windows-1252 as the WHATWG index gives them (€, en dash, per mille), not as C1 controls', async () => {
    const { layout } = await readCsv(bytes(0x74, 0x2c, 0x80, 0x96, 0x89, 0x0a, 0x31, 0x2c, 0x32, 0x0a), { header: true, onRow: () => undefined });
    expect(layout.encoding).toBe('windows-1252');
    expect(layout.header).toEqual(['t', '€–‰']);
  });
});
