import type { Transaction } from 'sequelize';
import { rawSql } from '@/lib/db/raw';
import { isoFromSqlDate, sqlDate } from '@/lib/db/sql-date';

/** One data version of a series: the intake run that made it, what it changed and why. */
export interface DataVersionRecord {
  version: number;
  runId: number;
  inserted: number;
  replaced: number;
  reason: string | null;
  /** when the run committed (ISO 8601) */
  at: string;
  source: string | null;
  fileName: string | null;
  userId: number | null;
  userName: string | null;
  tokenId: number | null;
}

/**
 * Counts a new data version of the series for the run that just stored new or replaced values, inside that run's
 * write transaction: the next number after the series' highest, so versions follow the order in which runs
 * committed (one write transaction at a time: SQLite's write lock, PostgreSQL's advisory write lock in models/db.ts). Returns the version.
 */
export async function recordDataVersion(
  transaction: Transaction,
  seriesId: number,
  change: { runId: number; inserted: number; replaced: number; reason: string | null },
): Promise<number> {
  const [{ version }] = await (
    await rawSql(transaction)
  ).all<{ version: number }>(
    `INSERT INTO data_versions (series_id, version, ingest_run_id, inserted, replaced, reason, created_at)
    VALUES (?, (SELECT COALESCE(MAX(version), 0) + 1 FROM data_versions WHERE series_id = ?), ?, ?, ?, ?, ?) RETURNING version`,
    [seriesId, seriesId, change.runId, change.inserted, change.replaced, change.reason, sqlDate(Date.now())],
  );
  return Number(version);
}

/** The series' current data version (0 when no versioned run stored anything yet). One index lookup. */
export async function currentDataVersion(seriesId: number, transaction?: Transaction): Promise<number> {
  const [{ version }] = await (
    await rawSql(transaction)
  ).all<{ version: number | null }>('SELECT MAX(version) AS version FROM data_versions WHERE series_id = ?', [seriesId]);
  return version === null ? 0 : Number(version);
}

/** The series' data versions, newest first, at most `limit`, with the run's source, file and sender. */
export async function listDataVersions(seriesId: number, limit = 100): Promise<DataVersionRecord[]> {
  const rows = await (
    await rawSql()
  ).all<{
    version: number;
    ingest_run_id: number;
    inserted: number;
    replaced: number;
    reason: string | null;
    created_at: string;
    source: string | null;
    file_name: string | null;
    user_id: number | null;
    user_name: string | null;
    token_id: number | null;
  }>(
    `SELECT v.version, v.ingest_run_id, v.inserted, v.replaced, v.reason, v.created_at, r.source, r.file_name, r.user_id, u.name AS user_name, r.token_id
    FROM data_versions v LEFT JOIN ingest_runs r ON r.id = v.ingest_run_id LEFT JOIN users u ON u.id = r.user_id
    WHERE v.series_id = ? ORDER BY v.version DESC LIMIT ?`,
    [seriesId, limit],
  );
  return rows.map((row) => ({
    version: row.version,
    runId: row.ingest_run_id,
    inserted: row.inserted,
    replaced: row.replaced,
    reason: row.reason,
    at: isoFromSqlDate(row.created_at),
    source: row.source,
    fileName: row.file_name,
    userId: row.user_id,
    userName: row.user_name,
    tokenId: row.token_id,
  }));
}
