import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { CsvFileError } from '@/lib/intake/csv';
import { collectCsvColumns } from '@/lib/intake/rows';

const DIR = path.resolve(__dirname, '../../fixtures/csv/feeds');

interface ColumnExpectation {
  usable: number;
  rejectedLines: number[];
  flags: number[];
  reasonIncludes?: string;
  notesInclude?: string;
}
type Expectation = { fileError: string; reasonIncludes?: string } | Record<'temp' | 'sal', ColumnExpectation>;

const expected = JSON.parse(fs.readFileSync(path.join(DIR, 'expected.json'), 'utf8')) as Record<string, Expectation>;
const COLUMNS = ['temp', 'sal'] as const;

function read(file: string) {
  // Streamed in small chunks, as the drop folder reads it, so chunk boundaries fall inside records.
  return collectCsvColumns(fs.createReadStream(path.join(DIR, file), { highWaterMark: 7 }), {
    timeColumn: 'time',
    timeFormat: 'iso8601',
    header: true,
    values: COLUMNS.map((column) => ({ valueColumn: column, flagColumn: `${column}_qc`, zone: 'UTC' })),
  });
}

describe('bad station-file corpus (fixtures/csv/feeds/expected.json)', () => {
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
      if ('fileError' in expectation) {
        const error = await read(file).then(
          () => null,
          (e: unknown) => e,
        );
        expect(error).toBeInstanceOf(CsvFileError);
        expect((error as CsvFileError).code).toBe(expectation.fileError);
        if (expectation.reasonIncludes) expect((error as CsvFileError).message).toContain(expectation.reasonIncludes);
        return;
      }
      const collected = await read(file);
      COLUMNS.forEach((column, k) => {
        const want = expectation[column];
        const rows = collected[k];
        expect(rows.t.length, `${column} usable`).toBe(want.usable);
        expect(
          rows.rejectedRows.map((r) => r.line),
          `${column} rejected lines`,
        ).toEqual(want.rejectedLines);
        expect(Array.from(rows.sourceFlag ?? []), `${column} flags`).toEqual(want.flags);
        if (want.reasonIncludes) expect(rows.rejectedRows[0].reason).toContain(want.reasonIncludes);
        if (want.notesInclude) expect(rows.notes.join(' ')).toContain(want.notesInclude);
      });
    });
  }
});
