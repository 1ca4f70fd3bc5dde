import type { Sequelize } from 'sequelize';

/**
 * The few SQL forms that differ between SQLite (the default) and PostgreSQL (DATABASE_URL), in one place, so a
 * query is written once with these fragments instead of twice. Every helper takes the Sequelize instance in use
 * (`db()`, or a migration's `q.sequelize`), so the choice follows the connection, not the environment of the moment.
 */
export type Dialect = 'sqlite' | 'postgres';

export function dialectOf(sequelize: Sequelize): Dialect {
  return sequelize.getDialect() === 'postgres' ? 'postgres' : 'sqlite';
}

export function isPostgres(sequelize: Sequelize): boolean {
  return dialectOf(sequelize) === 'postgres';
}

/**
 * A JSON column as text. SQLite keeps JSON as TEXT already; PostgreSQL's `json` type keeps the text as written, and
 * `::text` gives it back byte for byte (for LIKE and REPLACE on stored documents).
 */
export function jsonText(sequelize: Sequelize, column: string): string {
  return isPostgres(sequelize) ? `${column}::text` : column;
}

/** Text back into a JSON column (the inverse of `jsonText`). */
export function textJson(sequelize: Sequelize, expression: string): string {
  return isPostgres(sequelize) ? `(${expression})::json` : expression;
}

type SqlType = 'bigint' | 'double precision';

/** SQLite's `$.a.b[0]` as PostgreSQL's path array `{a,b,0}`. */
function pathArray(path: string): string {
  const steps = path
    .replace(/^\$/, '')
    .split(/\.|\[|\]/)
    .filter((step) => step !== '');
  return `'{${steps.join(',')}}'`;
}

/**
 * The value at `path` (SQLite's form, `$.a.b[0]`) of a JSON column or expression: a scalar as an SQL value, an
 * object or array as its JSON text, null when absent, on both (SQLite's `json_extract`; PostgreSQL's `#>>`, whose
 * scalars are text, so `cast` names the type a comparison or sum needs there).
 */
export function jsonPath(sequelize: Sequelize, json: string, path: string, cast?: SqlType): string {
  if (!isPostgres(sequelize)) return `json_extract(${json}, '${path}')`;
  const text = `((${json})::json #>> ${pathArray(path)})`;
  return cast ? `${text}::${cast}` : text;
}

/**
 * A JSON object built of (key, value at path) pairs, as JSON text: SQLite's `json_object`, PostgreSQL's
 * `json_build_object` (values keep their JSON type on both).
 */
export function jsonObjectOfPaths(sequelize: Sequelize, json: string, pairs: [key: string, path: string][]): string {
  if (!isPostgres(sequelize)) return `json_object(${pairs.map(([key, path]) => `'${key}', json_extract(${json}, '${path}')`).join(', ')})`;
  return `json_build_object(${pairs.map(([key, path]) => `'${key}', (${json})::json #> ${pathArray(path)}`).join(', ')})::text`;
}

/**
 * The elements of a JSON array (a column, or a bound parameter holding JSON text) as a FROM item `alias` with one
 * column, `value`: SQLite's `json_each`; on PostgreSQL `json_array_elements_text`, cast to `type` when the values
 * are compared with numbers, or `json_array_elements` (type 'json') when each element is itself read with `jsonPath`.
 */
export function jsonElements(sequelize: Sequelize, json: string, alias: string, type: 'text' | 'json' | SqlType = 'text'): string {
  if (!isPostgres(sequelize)) return `json_each(${json}) ${alias}`;
  if (type === 'json') return `json_array_elements((${json})::json) AS ${alias}(value)`;
  if (type === 'text') return `json_array_elements_text((${json})::json) AS ${alias}(value)`;
  return `(SELECT e.value::${type} AS value FROM json_array_elements_text((${json})::json) AS e(value)) AS ${alias}`;
}

/**
 * The end of a claim's inner SELECT (`UPDATE … WHERE id IN (SELECT … LIMIT n ${claimLock})`): on PostgreSQL the rows
 * picked are locked and rows another claimer holds are skipped, so two schedulers never pick the same row (its
 * UPDATE does not re-run the subquery after waiting on a lock). SQLite has one writer at a time and needs nothing.
 * `table` names the table to lock when the SELECT joins others.
 */
export function claimLock(sequelize: Sequelize, table?: string): string {
  if (!isPostgres(sequelize)) return '';
  return table ? ` FOR UPDATE OF ${table} SKIP LOCKED` : ' FOR UPDATE SKIP LOCKED';
}
