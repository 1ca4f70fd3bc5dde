import path from 'node:path';
import { Client, types } from 'pg';
import sqlite3 from 'sqlite3';
import { databaseUrlFor } from '../support/temp-db';

interface Backend {
  all<T>(sql: string, params: unknown[]): Promise<T[]>;
  exec(sql: string): Promise<void>;
  tables(): Promise<string[]>;
  close(): Promise<void>;
}

function sqliteBackend(handle: sqlite3.Database): Backend {
  return {
    all: <T>(sql: string, params: unknown[]) =>
      new Promise<T[]>((resolve, reject) => handle.all(sql, params, (error, rows) => (error ? reject(error) : resolve(rows as T[])))),
    exec: (sql) => new Promise((resolve, reject) => handle.exec(sql, (error) => (error ? reject(error) : resolve()))),
    tables: async () =>
      (
        await new Promise<{ name: string }[]>((resolve, reject) =>
          handle.all("SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name", (error, rows) =>
            error ? reject(error) : resolve(rows as { name: string }[]),
          ),
        )
      ).map((r) => r.name),
    close: () => new Promise((resolve, reject) => handle.close((error) => (error ? reject(error) : resolve()))),
  };
}

// COUNT(*) and BIGINT columns as numbers, as SQLite answers them (and as the product reads them: models/db.ts).
types.setTypeParser(types.builtins.INT8, (value) => Number(value));

function postgresBackend(client: Client): Backend {
  let n = 0;
  const numbered = (sql: string) => ((n = 0), sql.replace(/\?/g, () => `$${++n}`));
  return {
    all: async <T>(sql: string, params: unknown[]) => (await client.query<T>(numbered(sql), params)).rows,
    exec: async (sql) => {
      await client.query(sql);
    },
    tables: async () =>
      (await client.query<{ name: string }>("SELECT tablename AS name FROM pg_tables WHERE schemaname = 'public' ORDER BY tablename")).rows.map((r) => r.name),
    close: () => client.end(),
  };
}

/**
 * A plain driver connection to an app's database, separate from the app's own, so a test can look at (or, for
 * outage tests, lock) exactly what the product stored without going through the code under test: sqlite3 on the
 * data folder's file, or node-postgres on the folder's database in the PostgreSQL project (tests/support/temp-db.ts).
 * SQL uses `?` placeholders on both.
 */
export class RawDb {
  private constructor(
    private readonly backend: Backend,
    readonly dialect: 'sqlite' | 'postgres',
  ) {}

  static open(file: string, mode = sqlite3.OPEN_READWRITE): Promise<RawDb> {
    return new Promise((resolve, reject) => {
      const handle = new sqlite3.Database(file, mode, (error) => (error ? reject(error) : resolve(new RawDb(sqliteBackend(handle), 'sqlite'))));
    });
  }

  static async forDataDir(dataDir: string): Promise<RawDb> {
    const url = databaseUrlFor(dataDir);
    if (!url) return RawDb.open(path.join(dataDir, 'brinkwatch.sqlite'));
    const client = new Client(url);
    await client.connect();
    return new RawDb(postgresBackend(client), 'postgres');
  }

  all<T = Record<string, unknown>>(sql: string, params: unknown[] = []): Promise<T[]> {
    return this.backend.all<T>(sql, params);
  }

  async get<T = Record<string, unknown>>(sql: string, params: unknown[] = []): Promise<T | undefined> {
    return (await this.all<T>(sql, params))[0];
  }

  exec(sql: string): Promise<void> {
    return this.backend.exec(sql);
  }

  async count(table: string, where = '1 = 1', params: unknown[] = []): Promise<number> {
    const row = await this.get<{ n: number | string }>(`SELECT COUNT(*) AS n FROM "${table}" WHERE ${where}`, params);
    return Number(row!.n);
  }

  /** Row count of every table, for "nothing stored changed" checks. */
  async tableCounts(skip: string[] = []): Promise<Record<string, number>> {
    const counts: Record<string, number> = {};
    for (const name of await this.backend.tables()) if (!skip.includes(name)) counts[name] = await this.count(name);
    return counts;
  }

  close(): Promise<void> {
    return this.backend.close();
  }
}
