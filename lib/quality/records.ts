import type { Transaction } from 'sequelize';
import { Series, writeTransaction } from '@/models';
import { rawSql, type RawSql } from '@/lib/db/raw';
import { recordAudit } from '@/lib/audit';
import { parseInstantParam } from '@/lib/intake/time-formats';
import { UnprocessableError } from '@/lib/http/errors';
import type { CollectedRows } from '@/lib/intake/rows';
import { qcConfigSchema, type FlagOverride, type QcConfig } from '@/lib/schemas/quality';
import { FLAG_LABELS, setterCode, setterName, type FlaggedPoint, type FlagSetter, type QartodFlag } from './flags';
import { runQualityTests, type PointFlags } from './run';

/** At most this many stored readings before new data are looked back on: a day's rate-of-change period at 5 s. */
const MAX_CONTEXT = 20_000;
const READ_PAGE = 50_000;
const ANALYST = setterCode('analyst');

/** A series' QC settings, or null when none are set (or what is stored no longer validates: then no test runs). */
export function qcConfigOf(series: Pick<Series, 'qc'>): QcConfig | null {
  if (!series.qc) return null;
  const parsed = qcConfigSchema.safeParse(series.qc);
  return parsed.success ? parsed.data : null;
}

interface StoredRow {
  t: number;
  value: number;
  flag: number;
  flag_test: string | null;
  source_flag: number | null;
}

function setterOf(row: StoredRow): number {
  const code = row.flag_test ? setterCode(row.flag_test as Parameters<typeof setterCode>[0]) : 0;
  return code > 0 ? code : 0;
}

function runOver(series: Series, rows: StoredRow[], tail?: CollectedRows): PointFlags {
  const extra = tail ? tail.t.length : 0;
  const n = rows.length + extra;
  const time = new Float64Array(n);
  const value = new Float64Array(n);
  const source = new Uint8Array(n);
  rows.forEach((row, i) => {
    time[i] = Number(row.t);
    value[i] = row.value;
    source[i] = row.source_flag ?? 0;
  });
  if (tail) {
    time.set(tail.t, rows.length);
    value.set(tail.value, rows.length);
    if (tail.sourceFlag) source.set(tail.sourceFlag, rows.length);
  }
  return runQualityTests(time, value, qcConfigOf(series), { intervalMs: series.intervalMs === null ? null : Number(series.intervalMs), sourceFlag: source });
}

/** Writes the flags that changed, leaving an analyst's overrides alone; returns how many rows changed. */
async function updateChanged(conn: RawSql, seriesId: number, rows: StoredRow[], flags: PointFlags): Promise<number> {
  let changed = 0;
  const update = await conn.prepare('UPDATE observations SET flag = ?, flag_test = ? WHERE series_id = ? AND t = ?');
  try {
    for (let i = 0; i < rows.length; i++) {
      const row = rows[i];
      if (setterOf(row) === ANALYST) continue;
      if (row.flag === flags.flag[i] && setterOf(row) === flags.setter[i]) continue;
      await update.run([flags.flag[i], setterName(flags.setter[i]), seriesId, row.t]);
      changed++;
    }
  } finally {
    await update.finalize();
  }
  return changed;
}

/**
 * Flags for incoming rows at intake, inside the intake's transaction: the series' tests run over the stored
 * readings just before the new ones (as many as the tests look back on) followed by the new rows, so a spike at
 * the seam is judged with both neighbours; stored readings whose flag that changes (the last one's spike test can
 * now be evaluated) are updated. Stored readings between new ones (a backfill) are not looked at here: re-running
 * the tests over the history (`rerunQuality`) judges the record as a whole.
 */
export async function judgeIncoming(transaction: Transaction, series: Series, rows: CollectedRows): Promise<PointFlags> {
  const config = qcConfigOf(series);
  if (!config || rows.t.length === 0) return runQualityTests(rows.t, rows.value, null, { sourceFlag: rows.sourceFlag ?? undefined });
  const conn = await rawSql(transaction);
  // The spike test looks one reading back, the flat line REP_CNT_FAIL; the rate of change its whole period.
  const lookBack = Math.max(2, (config.flatLine?.fail ?? 0) + 1);
  const context = (
    await conn.all<StoredRow>(
      `SELECT t, value, flag, flag_test, source_flag FROM observations WHERE series_id = ? AND t < ?
      AND (t >= ? OR t >= (SELECT MIN(t) FROM (SELECT t FROM observations WHERE series_id = ? AND t < ? ORDER BY t DESC LIMIT ?) AS latest))
      ORDER BY t DESC LIMIT ?`,
      [
        series.id,
        rows.t[0],
        config.rateOfChange ? rows.t[0] - config.rateOfChange.periodHours * 3_600_000 : rows.t[0],
        series.id,
        rows.t[0],
        lookBack,
        MAX_CONTEXT,
      ],
    )
  ).reverse();
  const all = runOver(series, context, rows);
  await updateChanged(conn, series.id, context, { flag: all.flag.subarray(0, context.length), setter: all.setter.subarray(0, context.length) });
  return { flag: all.flag.subarray(context.length), setter: all.setter.subarray(context.length) };
}

export interface QualityRerun {
  points: number;
  changed: number;
  counts: Record<string, number>;
}

/**
 * Runs the series' tests over its whole stored record (after a change of settings, or to judge data stored before
 * the tests existed) and stores the flags that changed, in one transaction; overrides by an analyst stay. Marks the
 * series for a fresh analysis when anything changed, and audits the run. O(n) reads and writes.
 */
export async function rerunQuality(series: Series, actor: { id: number } | null): Promise<QualityRerun> {
  return writeTransaction(async (transaction) => {
    const conn = await rawSql(transaction);
    const rows: StoredRow[] = [];
    // Keyset paging from the first instant on: the first page has no lower bound.
    let after: number | null = null;
    for (;;) {
      const page: StoredRow[] = await conn.all<StoredRow>(
        `SELECT t, value, flag, flag_test, source_flag FROM observations WHERE series_id = ?${after === null ? '' : ' AND t > ?'} ORDER BY t LIMIT ?`,
        after === null ? [series.id, READ_PAGE] : [series.id, after, READ_PAGE],
      );
      for (const row of page) rows.push(row);
      if (page.length < READ_PAGE) break;
      after = Number(page[page.length - 1].t);
    }
    const flags = runOver(series, rows);
    const changed = await updateChanged(conn, series.id, rows, flags);
    if (changed) await Series.update({ needsAnalysis: true }, { where: { id: series.id }, transaction });
    const counts = await flagCounts(conn, series.id);
    await recordAudit(
      { actorId: actor?.id ?? null, action: 'quality.rerun', entity: 'series', entityId: series.id, details: { points: rows.length, changed, counts } },
      transaction,
    );
    return { points: rows.length, changed, counts };
  });
}

/** How many of the series' points carry each flag, by its label. */
async function flagCounts(conn: RawSql, seriesId: number): Promise<Record<string, number>> {
  const rows = await conn.all<{ flag: QartodFlag; n: number }>('SELECT flag, COUNT(*) AS n FROM observations WHERE series_id = ? GROUP BY flag', [seriesId]);
  return Object.fromEntries(rows.map((row) => [FLAG_LABELS[row.flag] ?? String(row.flag), row.n]));
}

/**
 * An analyst's override: every point in [from, to] gets the given flag, set by 'analyst', which re-runs of the
 * tests leave alone. Audited with the reason, the range and the number of points; the series is analysed afresh.
 * from/to are epoch ms or ISO 8601 (in the series' zone without an offset); a bad one is a 422 naming the field.
 */
export async function overrideFlags(series: Series, override: FlagOverride, actor: { id: number }): Promise<{ changed: number }> {
  const instant = (name: 'from' | 'to') => {
    const parsed = parseInstantParam(String(override[name]), series.timeZone);
    if (!parsed.ok) throw new UnprocessableError('Some fields are not valid.', { [name]: [`Give ISO 8601 or epoch milliseconds: ${parsed.reason}`] });
    return parsed.t;
  };
  const input = { ...override, from: instant('from'), to: instant('to') };
  if (input.from > input.to) throw new UnprocessableError('Some fields are not valid.', { to: ['The end of the range is before its start.'] });
  return writeTransaction(async (transaction) => {
    const changed = await (
      await rawSql(transaction)
    ).run("UPDATE observations SET flag = ?, flag_test = 'analyst' WHERE series_id = ? AND t >= ? AND t <= ?", [input.flag, series.id, input.from, input.to]);
    if (changed) await Series.update({ needsAnalysis: true }, { where: { id: series.id }, transaction });
    await recordAudit(
      {
        actorId: actor.id,
        action: 'quality.override',
        entity: 'series',
        entityId: series.id,
        details: { from: input.from, to: input.to, flag: input.flag, reason: input.reason, changed },
      },
      transaction,
    );
    return { changed };
  });
}

/**
 * The points of [from, to] flagged suspect, fail or missing, in time order, at most `limit` (the total says how many
 * there are): what the record chart marks. A range scan of the primary key. O(points in range).
 */
export async function flaggedPoints(seriesId: number, from: number, to: number, limit: number): Promise<{ points: FlaggedPoint[]; total: number }> {
  const conn = await rawSql();
  const [rows, [{ total }]] = await Promise.all([
    conn.all<{ t: number; value: number; flag: QartodFlag; flag_test: FlagSetter | null }>(
      'SELECT t, value, flag, flag_test FROM observations WHERE series_id = ? AND t >= ? AND t <= ? AND flag IN (3, 4, 9) ORDER BY t LIMIT ?',
      [seriesId, from, to, limit],
    ),
    conn.all<{ total: number }>('SELECT COUNT(*) AS total FROM observations WHERE series_id = ? AND t >= ? AND t <= ? AND flag IN (3, 4, 9)', [
      seriesId,
      from,
      to,
    ]),
  ]);
  return { points: rows.map((row) => ({ t: Number(row.t), value: row.value, flag: row.flag, test: row.flag_test })), total };
}
