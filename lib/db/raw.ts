import type { Transaction } from 'sequelize';
import type { Database } from 'sqlite3';
import type { PoolClient } from 'pg';
import { db } from '@/models';

/**
 * Statements on the driver itself, for the hot paths where building a Sequelize result per row costs more than
 * the query (observation ranges, intake writes, QC passes): node-sqlite3 on SQLite, node-postgres on PostgreSQL.
 * SQL is written once with `?` placeholders; on PostgreSQL they become `$1, $2, …` (no statement here has a `?` in a
 * literal). Inside a transaction the statements run on that transaction's own connection, so they see and are
 * part of what it does; outside one they run on a connection of the pool (SQLite: the process's shared handle).
 */
export interface RawSql {
  /** Every row of a query. */
  all<T>(sql: string, params: unknown[]): Promise<T[]>;
  /** A write; resolves to the number of rows it changed. */
  run(sql: string, params: unknown[]): Promise<number>;
  /** The same write many times (SQLite prepares it once; PostgreSQL reuses its parsed form per connection). */
  prepare(sql: string): Promise<RawStatement>;
}

export interface RawStatement {
  run(params: unknown[]): Promise<number>;
  finalize(): Promise<void>;
}

interface ConnectionManager {
  getConnection(options?: unknown): Promise<unknown>;
  releaseConnection(connection: unknown): Promise<void>;
}

/** `?` placeholders as PostgreSQL's numbered ones. */
function numbered(sql: string): string {
  let n = 0;
  return sql.replace(/\?/g, () => `$${++n}`);
}

function sqliteSql(connection: Database): RawSql {
  const changes = (run: (done: (this: { changes: number }, error: Error | null) => void) => void) =>
    new Promise<number>((resolve, reject) =>
      run(function done(error) {
        if (error) reject(error);
        else resolve(this.changes);
      }),
    );
  return {
    all: <T>(sql: string, params: unknown[]) =>
      new Promise<T[]>((resolve, reject) => connection.all(sql, params, (error, rows) => (error ? reject(error) : resolve(rows as T[])))),
    run: (sql, params) => changes((done) => connection.run(sql, params, done)),
    prepare: (sql) =>
      new Promise((resolve, reject) => {
        const statement = connection.prepare(sql, (error) => {
          if (error) return reject(error);
          resolve({
            run: (params) => changes((done) => statement.run(params, done)),
            finalize: () => new Promise((finished) => statement.finalize(() => finished())),
          });
        });
      }),
  };
}

/** One name per statement text, so a statement is parsed once per connection however often it is prepared. */
const statementNames = new Map<string, string>();

function postgresSql(client: () => Promise<{ client: PoolClient; release: () => Promise<void> }>): RawSql {
  const query = async <T>(text: string, values: unknown[], name?: string) => {
    const { client: connection, release } = await client();
    try {
      const result = await (connection.query as unknown as (config: object) => Promise<{ rows: T[]; rowCount: number | null }>)({ text, values, name });
      return result;
    } finally {
      await release();
    }
  };
  return {
    all: async <T>(sql: string, params: unknown[]) => (await query<T>(numbered(sql), params)).rows,
    run: async (sql, params) => (await query(numbered(sql), params)).rowCount ?? 0,
    prepare: async (sql) => {
      const text = numbered(sql);
      let name = statementNames.get(text);
      if (!name) statementNames.set(text, (name = `bw_raw_${statementNames.size + 1}`));
      return { run: async (params) => (await query(text, params, name)).rowCount ?? 0, finalize: async () => undefined };
    },
  };
}

/** Raw statements on `transaction`'s connection, or on the pool's when none is given. */
export async function rawSql(transaction?: Transaction | null): Promise<RawSql> {
  const sequelize = await db();
  const own = transaction ? (transaction as unknown as { connection: unknown }).connection : null;
  if (sequelize.getDialect() !== 'postgres') {
    if (own) return sqliteSql(own as Database);
    const manager = sequelize.connectionManager as unknown as { getConnection(options: { uuid: string }): Promise<Database> };
    return sqliteSql(await manager.getConnection({ uuid: 'default' }));
  }
  if (own) return postgresSql(async () => ({ client: own as PoolClient, release: async () => undefined }));
  const manager = sequelize.connectionManager as unknown as ConnectionManager;
  return postgresSql(async () => {
    const connection = await manager.getConnection({ type: 'SELECT' });
    return { client: connection as PoolClient, release: () => manager.releaseConnection(connection) };
  });
}
