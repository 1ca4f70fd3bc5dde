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
