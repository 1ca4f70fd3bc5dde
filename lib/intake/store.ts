import type { Transaction } from 'sequelize';
import { rawSql, type RawSql } from '@/lib/db/raw';
import type { PointFlags } from '@/lib/quality/run';
import { setterName } from '@/lib/quality/flags';
import { sqlDate } from '@/lib/db/sql-date';
import type { CollectedRows, RejectedRow } from './rows';

/** Rows per multi-row INSERT: 500 × 7 parameters stays far below SQLite's (and PostgreSQL's) parameter limit and amortises each call. */
const INSERT_BATCH = 500;
const COLUMNS = 7;
const INSERT_SQL = (count: number) =>
  `INSERT INTO observations (series_id, t, value, ingest_run_id, flag, flag_test, source_flag) VALUES ${new Array(count).fill('(?,?,?,?,?,?,?)').join(',')}`;
const READ_PAGE = 50_000;

export const ROW_NEW = 0;
export const ROW_DUPLICATE = 1;
export const ROW_REPLACE = 2;
export const ROW_CONFLICT = 3;

export interface Classified {
  kind: Uint8Array;
  stored: Float64Array;
}

/**
 * Compares unique, sorted incoming rows with what the series already stores. When the input is at least as large as
 * the stored stretch it covers, the stretch is read in pages and merged (O(n + k)); otherwise each instant is looked
 * up by primary key in batches (O(n log N)). Runs on the transaction's connection when one is given, so the write
 * that follows sees exactly what was compared.
 */
export async function classifyAgainstStored(seriesId: number, rows: CollectedRows, transaction: Transaction): Promise<Classified> {
  const n = rows.t.length;
  const kind = new Uint8Array(n);
  const stored = new Float64Array(n);
  if (n === 0) return { kind, stored };
  const conn = await rawSql(transaction);
  const [{ count }] = await conn.all<{ count: number }>('SELECT COUNT(*) AS count FROM observations WHERE series_id = ? AND t BETWEEN ? AND ?', [
    seriesId,
    rows.t[0],
    rows.t[n - 1],
  ]);
  const mark = (i: number, value: number) => {
    stored[i] = value;
    kind[i] = value === rows.value[i] ? ROW_DUPLICATE : ROW_CONFLICT;
  };
  if (count === 0) return { kind, stored };
  if (n >= count) {
    let i = 0;
    let after = rows.t[0] - 1;
    for (;;) {
      const page = await conn.all<{ t: number; value: number }>(
        'SELECT t, value FROM observations WHERE series_id = ? AND t > ? AND t <= ? ORDER BY t LIMIT ?',
        [seriesId, after, rows.t[n - 1], READ_PAGE],
      );
      for (const row of page) {
        while (i < n && rows.t[i] < row.t) i++;
        if (i < n && rows.t[i] === row.t) mark(i, row.value);
      }
      if (page.length < READ_PAGE) break;
      after = page[page.length - 1].t;
    }
  } else {
    const index = new Map<number, number>();
    for (let start = 0; start < n; start += INSERT_BATCH) {
      const end = Math.min(n, start + INSERT_BATCH);
      index.clear();
      const params: number[] = [seriesId];
      for (let i = start; i < end; i++) {
        index.set(rows.t[i], i);
        params.push(rows.t[i]);
      }
      const found = await conn.all<{ t: number; value: number }>(
        `SELECT t, value FROM observations WHERE series_id = ? AND t IN (${new Array(end - start).fill('?').join(',')})`,
        params,
      );
      for (const row of found) mark(index.get(row.t)!, row.value);
    }
  }
  return { kind, stored };
}

export function conflictRejections(rows: CollectedRows, classified: Classified): RejectedRow[] {
  const out: RejectedRow[] = [];
  for (let i = 0; i < rows.t.length; i++) {
    if (classified.kind[i] === ROW_CONFLICT) {
      out.push({
        line: rows.line[i],
        column: rows.timeColumn,
        reason: `a different value (${classified.stored[i]}) is already stored for this instant; the stored value is kept (duplicate policy: reject)`,
      });
    }
  }
  return out;
}

/**
 * Inserts the new rows and overwrites the replaced ones on the transaction's connection, with statements prepared
 * once; each row written names the run that wrote it (an analysis's provenance lists them) and carries its QARTOD
 * flag, what set it, and the source's own flag.
 */
export async function writeRows(
  transaction: Transaction,
  seriesId: number,
  rows: CollectedRows,
  classified: Classified,
  replace: boolean,
  runId: number,
  quality: PointFlags,
): Promise<{ inserted: number; replaced: number }> {
  const conn: RawSql = await rawSql(transaction);
  const full = await conn.prepare(INSERT_SQL(INSERT_BATCH));
  const update = await conn.prepare(
    'UPDATE observations SET value = ?, ingest_run_id = ?, flag = ?, flag_test = ?, source_flag = ? WHERE series_id = ? AND t = ?',
  );
  // A replaced value is kept as an earlier version, naming the run that replaces it (reprocessed data stays traceable).
  const keep = await conn.prepare(
    `INSERT INTO observation_versions (series_id, t, value, flag, flag_test, source_flag, ingest_run_id, replaced_by_run_id, replaced_at)
    SELECT series_id, t, value, flag, flag_test, source_flag, ingest_run_id, ?, ? FROM observations WHERE series_id = ? AND t = ?`,
  );
  const now = sqlDate(Date.now());
  const sourceFlag = (i: number) => (rows.sourceFlag && rows.sourceFlag[i] ? rows.sourceFlag[i] : null);
  let inserted = 0;
  let replaced = 0;
  try {
    const batch: (number | string | null)[] = [];
    for (let i = 0; i < rows.t.length; i++) {
      const kind = classified.kind[i];
      if (kind === ROW_NEW) {
        batch.push(seriesId, rows.t[i], rows.value[i], runId, quality.flag[i], setterName(quality.setter[i]), sourceFlag(i));
        inserted++;
        if (batch.length === INSERT_BATCH * COLUMNS) {
          await full.run(batch);
          batch.length = 0;
        }
      } else if (kind === ROW_CONFLICT && replace) {
        await keep.run([runId, now, seriesId, rows.t[i]]);
        await update.run([rows.value[i], runId, quality.flag[i], setterName(quality.setter[i]), sourceFlag(i), seriesId, rows.t[i]]);
        replaced++;
      }
    }
    if (batch.length) {
      await conn.run(INSERT_SQL(batch.length / COLUMNS), batch);
    }
  } finally {
    await full.finalize();
    await update.finalize();
    await keep.finalize();
  }
  return { inserted, replaced };
}
