import 'server-only';
import { rawSql } from '@/lib/db/raw';
import { isoFromSqlDate } from '@/lib/db/sql-date';
import { formatInstant } from './time-formats';

/** An earlier value of a point, kept when reprocessed data replaced it, with who and what replaced it. */
export interface ObservationVersion {
  t: number;
  time: string;
  value: number;
  flag: number;
  /** the run that had written this value (null before runs were recorded) */
  writtenByRun: number | null;
  replacedAt: string;
  replacedBy: { runId: number; source: string | null; fileName: string | null; userId: number | null };
}

/**
 * The earlier values of a series' points in [from, to], newest replacement first per instant, at most `limit`: what
 * reprocessing changed, with the run (user, token or file) that changed it. Indexed by (series_id, t).
 */
export async function observationVersions(seriesId: number, range: { from?: number; to?: number; limit?: number }): Promise<ObservationVersion[]> {
  const bounds: string[] = [];
  const params: unknown[] = [seriesId];
  // An open end is left out of the statement rather than bound as ±Number.MAX_VALUE, which no BIGINT column takes.
  if (range.from !== undefined) {
    bounds.push(' AND v.t >= ?');
    params.push(range.from);
  }
  if (range.to !== undefined) {
    bounds.push(' AND v.t <= ?');
    params.push(range.to);
  }
  const rows = await (
    await rawSql()
  ).all<{
    t: number;
    value: number;
    flag: number;
    ingest_run_id: number | null;
    replaced_by_run_id: number;
    replaced_at: unknown;
    source: string | null;
    file_name: string | null;
    user_id: number | null;
  }>(
    `SELECT v.t, v.value, v.flag, v.ingest_run_id, v.replaced_by_run_id, v.replaced_at, r.source, r.file_name, r.user_id
      FROM observation_versions v LEFT JOIN ingest_runs r ON r.id = v.replaced_by_run_id
      WHERE v.series_id = ?${bounds.join('')} ORDER BY v.t, v.id DESC LIMIT ?`,
    [...params, range.limit ?? 10_000],
  );
  return rows.map((row) => ({
    t: Number(row.t),
    time: formatInstant(Number(row.t)),
    value: row.value,
    flag: row.flag,
    writtenByRun: row.ingest_run_id,
    replacedAt: isoFromSqlDate(row.replaced_at),
    replacedBy: { runId: row.replaced_by_run_id, source: row.source, fileName: row.file_name, userId: row.user_id },
  }));
}
