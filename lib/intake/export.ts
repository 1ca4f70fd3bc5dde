import 'server-only';
import { QueryTypes } from 'sequelize';
import { db } from '@/models';
import type { ObservationRange } from '@/lib/analysis/observations';
import { formatInstant } from './time-formats';

const PAGE = 10_000;

/**
 * A series' observations as CSV (time in ISO 8601 UTC, t in epoch ms, value, QARTOD flag), streamed page by page with a keyset
 * on the primary key, so a million-point export holds one page in memory.
 */
export function observationsCsvStream(seriesId: number, range: ObservationRange): ReadableStream<Uint8Array> {
  const encoder = new TextEncoder();
  let after = range.from === undefined ? null : range.from - 1;
  let left = range.limit ?? Number.POSITIVE_INFINITY;
  let started = false;
  return new ReadableStream<Uint8Array>({
    async pull(controller) {
      if (!started) {
        started = true;
        controller.enqueue(encoder.encode('time,t,value,flag\n'));
        return;
      }
      if (left <= 0) return controller.close();
      const sequelize = await db();
      const clauses = ['series_id = :seriesId'];
      if (after !== null) clauses.push('t > :after');
      if (range.to !== undefined) clauses.push('t <= :to');
      const rows = await sequelize.query<{ t: number; value: number; flag: number }>(
        `SELECT t, value, flag FROM observations WHERE ${clauses.join(' AND ')} ORDER BY t LIMIT :limit`,
        { replacements: { seriesId, after, to: range.to, limit: Math.min(PAGE, left) }, type: QueryTypes.SELECT, raw: true },
      );
      if (rows.length === 0) return controller.close();
      let text = '';
      for (const row of rows) text += `${formatInstant(Number(row.t))},${row.t},${row.value},${row.flag}\n`;
      controller.enqueue(encoder.encode(text));
      after = Number(rows[rows.length - 1].t);
      left -= rows.length;
      if (rows.length < PAGE) {
        left = 0;
      }
    },
  });
}
