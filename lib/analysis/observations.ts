import { QueryTypes } from 'sequelize';
import { db } from '@/models';

export interface ObservationRange {
  from?: number;
  to?: number;
  limit?: number;
}

/**
 * A series' observations in time order as typed arrays (UTC ms, value): what the engine takes. One indexed range
 * scan of the (series_id, t) primary key; raw rows rather than model instances because records run to millions.
 */
export async function loadObservations(seriesId: number, range: ObservationRange = {}): Promise<{ time: Float64Array; value: Float64Array }> {
  const sequelize = await db();
  const clauses = ['series_id = :seriesId'];
  if (range.from !== undefined) clauses.push('t >= :from');
  if (range.to !== undefined) clauses.push('t <= :to');
  const limit = range.limit !== undefined ? ' LIMIT :limit' : '';
  const rows = await sequelize.query<{ t: number; value: number }>(
    `SELECT t, value FROM observations WHERE ${clauses.join(' AND ')} ORDER BY t${limit}`,
    { replacements: { seriesId, ...range }, type: QueryTypes.SELECT, raw: true },
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
