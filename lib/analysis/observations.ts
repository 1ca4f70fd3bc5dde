import { QueryTypes } from 'sequelize';
import { db } from '@/models';
import { rawSql, type RawSql } from '@/lib/db/raw';
import { isPostgres } from '@/lib/db/dialect';
import { qcConfigSchema } from '@/lib/schemas/quality';
import { flagsLeftOut } from '@/lib/quality/flags';

export interface ObservationRange {
  from?: number;
  to?: number;
  limit?: number;
  /** read the record as it stood at this data version (`rowsAtVersion`) instead of as it is stored now */
  version?: number;
}

/**
 * The rows of every series as they stood at data version `version` (lib/intake/data-versions.ts), as a subquery with
 * the columns of `observations` that reads use (series_id, t, value, flag, ingest_run_id): a stored row whose
 * writing run belongs to that version or an earlier one, and an earlier value (`observation_versions`) written by
 * such a run and replaced by a later one. A run without a data version row counts as version 0 (rows stored before
 * versions were counted, and seeded rows without a run, are part of every version). Exact because versions are
 * numbered in commit order, so each instant's values hold over disjoint stretches of versions. Flags are those
 * stored with each value: a flag changed without new data (a re-run of the tests, an analyst's override) is not a
 * new version and shows in the rebuilt record too. SQLite pushes the caller's series and time bounds into both
 * arms (the (series_id, t) key of observations, the (series_id, t) index of observation_versions).
 */
export function rowsAtVersion(version: number): string {
  const v = Math.trunc(Number(version));
  if (!Number.isFinite(v)) throw new Error('a data version is a whole number');
  return `(SELECT o.series_id, o.t, o.value, o.flag, o.ingest_run_id FROM observations o
      LEFT JOIN data_versions w ON w.series_id = o.series_id AND w.ingest_run_id = o.ingest_run_id
      WHERE COALESCE(w.version, 0) <= ${v}
    UNION ALL
    SELECT p.series_id, p.t, p.value, p.flag, p.ingest_run_id FROM observation_versions p
      LEFT JOIN data_versions w ON w.series_id = p.series_id AND w.ingest_run_id = p.ingest_run_id
      LEFT JOIN data_versions r ON r.series_id = p.series_id AND r.ingest_run_id = p.replaced_by_run_id
      WHERE COALESCE(w.version, 0) <= ${v} AND COALESCE(r.version, 0) > ${v})`;
}

/** The table (or rebuilt record) a read of the given range takes its rows from. */
export function rowsOf(range: { version?: number }): string {
  return range.version === undefined ? 'observations' : `${rowsAtVersion(range.version)} AS rebuilt`;
}

/** Rows packed into one string per query: bounds the string (about 3 MB) on records of millions of points. */
const PACKED_ROWS = 100_000;

/**
 * A series' observations in time order as typed arrays (UTC ms, value): what the engine takes. Only the points an
 * analysis may use: those flagged 4 (fail) or 9 (missing) on the QARTOD scale are left out, and 3 (suspect) too
 * when the series' QC settings say so (`suspectInAnalysis: false`), so every analysis, preview, backtest and
 * provenance hash reads the same points. `loadFlaggedObservations` reads every point with its flag.
 *
 * Indexed range scans of the (series_id, t) primary key on the raw sqlite3 handle, PACKED_ROWS at a time, each
 * answered as ONE string `t,value;t,value;…` built inside SQLite: node-sqlite3 spends most of a large read making
 * one JS object per row, and one string per 100,000 rows reads about 40 % faster. Exact: SQLite turns a REAL into
 * text that reads back as the same double (from memory, since its 3.43 rewrite of that conversion; the bundled
 * SQLite is 3.52), and ECMAScript's Number() reads decimal text correctly rounded (ECMA-262 §7.1.4.1.1), so every
 * stored double comes back bit for bit; tests/intake/pipeline.test.ts checks it on random bit patterns, so an
 * SQLite that did not would fail there. PostgreSQL packs the same string with `string_agg`; since its version 12 a
 * double's text is the shortest that reads back exactly (extra_float_digits 1, the default:
 * https://www.postgresql.org/docs/current/datatype-numeric.html#DATATYPE-FLOAT), which the same test checks there. O(n).
 */
export async function loadObservations(seriesId: number, range: ObservationRange = {}): Promise<{ time: Float64Array; value: Float64Array }> {
  const { time, value } = await readPacked(await rawSql(), seriesId, range, await flagsLeftOutOf(seriesId));
  return { time, value };
}

/** The QARTOD flags an analysis of the series leaves out: fail and missing, and suspect unless its QC keeps them. */
export async function flagsLeftOutOf(seriesId: number): Promise<number[]> {
  const [series] = await (await rawSql()).all<{ qc: unknown }>('SELECT qc FROM series WHERE id = ?', [seriesId]);
  // SQLite hands a JSON column back as its text, PostgreSQL's driver as the parsed value.
  const stored = typeof series?.qc === 'string' ? JSON.parse(series.qc) : series?.qc;
  const qc = stored ? qcConfigSchema.safeParse(stored) : null;
  return flagsLeftOut(qc?.success ? qc.data.suspectInAnalysis : true);
}

/** Every point of a series in time order with its QARTOD flag (what the observations API and the record chart show). O(n). */
export async function loadFlaggedObservations(
  seriesId: number,
  range: ObservationRange = {},
): Promise<{ time: Float64Array; value: Float64Array; flag: Uint8Array }> {
  const { time, value, flag } = await readPacked(await rawSql(), seriesId, range, null);
  return { time, value, flag: flag! };
}

async function readPacked(connection: RawSql, seriesId: number, range: ObservationRange, leaveOut: number[] | null) {
  const clauses = ['series_id = ?'];
  const bounds: unknown[] = [seriesId];
  if (range.from !== undefined) {
    clauses.push('t >= ?');
    bounds.push(range.from);
  }
  if (range.to !== undefined) {
    clauses.push('t <= ?');
    bounds.push(range.to);
  }
  // The flags are small integers from a fixed list, written into the statement rather than bound.
  if (leaveOut) clauses.push(`flag NOT IN (${leaveOut.map(Number).join(',')})`);
  const withFlag = leaveOut === null;
  const record = withFlag ? "t || ',' || CAST(value AS TEXT) || ',' || flag" : "t || ',' || CAST(value AS TEXT)";
  const postgres = isPostgres(await db());
  const concat = postgres ? 'string_agg' : 'group_concat';
  // The first page has no lower bound; each later one starts after the last instant of the one before (keyset paging).
  // SQLite concatenates the page's rows in the order its subquery gives them, but only an ORDER BY inside the
  // aggregate promises that order, and that one sorts the page again (two thirds of the read of 10,000 rows). So
  // SQLite's page is read without it and checked: instants strictly increasing (they are unique per series), else
  // read again with it.
  const sql = (paging: boolean, sorted: boolean) => `SELECT COUNT(*) AS n, MAX(t) AS last, ${concat}(${record}, ';'${sorted ? ' ORDER BY t' : ''}) AS packed
    FROM (SELECT t, value, flag FROM ${rowsOf(range)} WHERE ${[...clauses, ...(paging ? ['t > ?'] : [])].join(' AND ')} ORDER BY t LIMIT ?) AS page`;
  const times: Float64Array[] = [];
  const values: Float64Array[] = [];
  const flags: Uint8Array[] = [];
  let total = 0;
  let after: number | null = null;
  for (;;) {
    const want = Math.min(PACKED_ROWS, range.limit === undefined ? PACKED_ROWS : range.limit - total);
    if (want <= 0) break;
    const page = async (sorted: boolean) => {
      const [chunk]: { n: number; last: number | null; packed: string | null }[] = await connection.all(
        sql(after !== null, sorted),
        after === null ? [...bounds, want] : [...bounds, after, want],
      );
      return chunk.n && chunk.packed !== null ? { ...unpackPage(chunk.packed, withFlag), last: chunk.last } : null;
    };
    let chunk = await page(postgres);
    if (chunk && !chunk.increasing) chunk = await page(true);
    if (!chunk) break;
    const { time, value, flag } = chunk;
    times.push(time);
    values.push(value);
    if (flag) flags.push(flag);
    total += time.length;
    after = Number(chunk.last);
    if (time.length < want) break;
  }
  return { time: joined(times, Float64Array, total), value: joined(values, Float64Array, total), flag: withFlag ? joined(flags, Uint8Array, total) : null };
}

/** The rows of one packed page (`t,value[,flag];…`) as typed arrays, and whether its instants strictly increase. O(rows). */
export function unpackPage(packed: string, withFlag: boolean) {
  const records = packed.split(';');
  const time = new Float64Array(records.length);
  const value = new Float64Array(records.length);
  const flag = withFlag ? new Uint8Array(records.length) : null;
  let increasing = true;
  for (let i = 0; i < records.length; i++) {
    const text = records[i];
    const comma = text.indexOf(',');
    time[i] = Number(text.slice(0, comma));
    if (i > 0 && !(time[i] > time[i - 1])) increasing = false;
    if (flag) {
      const second = text.lastIndexOf(',');
      value[i] = Number(text.slice(comma + 1, second));
      flag[i] = Number(text.slice(second + 1));
    } else {
      value[i] = Number(text.slice(comma + 1));
    }
  }
  return { time, value, flag, increasing };
}

function joined<A extends Float64Array | Uint8Array>(parts: A[], Kind: new (n: number) => A, total: number): A {
  if (parts.length === 1) return parts[0];
  const out = new Kind(total);
  let offset = 0;
  for (const part of parts) {
    out.set(part, offset);
    offset += part.length;
  }
  return out;
}

/** Count, first and last instant of a series' record (as it stood at `version` when one is given). */
export async function observationExtent(seriesId: number, version?: number): Promise<{ count: number; first: number | null; last: number | null }> {
  const sequelize = await db();
  const [row] = await sequelize.query<{ count: number; first: number | null; last: number | null }>(
    `SELECT COUNT(*) AS count, MIN(t) AS first, MAX(t) AS last FROM ${rowsOf({ version })} WHERE series_id = :seriesId`,
    { replacements: { seriesId }, type: QueryTypes.SELECT },
  );
  return { count: Number(row.count), first: row.first === null ? null : Number(row.first), last: row.last === null ? null : Number(row.last) };
}
