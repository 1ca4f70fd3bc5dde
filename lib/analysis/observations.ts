import { QueryTypes } from 'sequelize';
import { db } from '@/models';
import { allRows, rawReadConnection } from '@/models/db';

export interface ObservationRange {
  from?: number;
  to?: number;
  limit?: number;
}

/**
 * A series' observations in time order as typed arrays (UTC ms, value): what the engine takes. One indexed range
 * scan of the (series_id, t) primary key, on the raw sqlite3 handle because records run to millions of rows.
 */
export async function loadObservations(seriesId: number, range: ObservationRange = {}): Promise<{ time: Float64Array; value: Float64Array }> {
  const clauses = ['series_id = ?'];
  const params: unknown[] = [seriesId];
  if (range.from !== undefined) {
    clauses.push('t >= ?');
    params.push(range.from);
  }
  if (range.to !== undefined) {
    clauses.push('t <= ?');
    params.push(range.to);
  }
  let limit = '';
  if (range.limit !== undefined) {
    limit = ' LIMIT ?';
    params.push(range.limit);
  }
  const rows = await allRows<{ t: number; value: number }>(
    await rawReadConnection(),
    `SELECT t, value FROM observations WHERE ${clauses.join(' AND ')} ORDER BY t${limit}`,
    params,
  );
  const time = new Float64Array(rows.length);
  const value = new Float64Array(rows.length);
  for (let i = 0; i < rows.length; i++) {
    time[i] = rows[i].t;
    value[i] = rows[i].value;
  }
  return { time, value };
}

/** Count, first and last instant of a series' record. */
export async function observationExtent(seriesId: number): Promise<{ count: number; first: number | null; last: number | null }> {
  const sequelize = await db();
  const [row] = await sequelize.query<{ count: number; first: number | null; last: number | null }>(
    'SELECT COUNT(*) AS count, MIN(t) AS first, MAX(t) AS last FROM observations WHERE series_id = :seriesId',
    { replacements: { seriesId }, type: QueryTypes.SELECT },
  );
  return { count: Number(row.count), first: row.first === null ? null : Number(row.first), last: row.last === null ? null : Number(row.last) };
}
