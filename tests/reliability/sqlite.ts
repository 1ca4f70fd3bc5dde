import path from 'node:path';
import sqlite3 from 'sqlite3';

/**
 * A plain sqlite3 connection to an app's database, separate from the app's own, so a test can look at (or, for
 * outage tests, lock) exactly what the product stored without going through the code under test.
 */
export class RawDb {
  private constructor(private readonly handle: sqlite3.Database) {}

  static open(file: string, mode = sqlite3.OPEN_READWRITE): Promise<RawDb> {
    return new Promise((resolve, reject) => {
      const handle = new sqlite3.Database(file, mode, (error) => (error ? reject(error) : resolve(new RawDb(handle))));
    });
  }

  static forDataDir(dataDir: string): Promise<RawDb> {
    return RawDb.open(path.join(dataDir, 'brinkwatch.sqlite'));
  }

  all<T = Record<string, unknown>>(sql: string, params: unknown[] = []): Promise<T[]> {
    return new Promise((resolve, reject) => {
      this.handle.all(sql, params, (error, rows) => (error ? reject(error) : resolve(rows as T[])));
    });
  }

  async get<T = Record<string, unknown>>(sql: string, params: unknown[] = []): Promise<T | undefined> {
    return (await this.all<T>(sql, params))[0];
  }

  exec(sql: string): Promise<void> {
    return new Promise((resolve, reject) => {
      this.handle.exec(sql, (error) => (error ? reject(error) : resolve()));
    });
  }

  async count(table: string, where = '1 = 1', params: unknown[] = []): Promise<number> {
    const row = await this.get<{ n: number }>(`SELECT COUNT(*) AS n FROM "${table}" WHERE ${where}`, params);
    return row!.n;
  }

  /** Row count of every table, for "nothing stored changed" checks. */
  async tableCounts(skip: string[] = []): Promise<Record<string, number>> {
    const tables = await this.all<{ name: string }>("SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite_%' ORDER BY name");
    const counts: Record<string, number> = {};
    for (const { name } of tables) if (!skip.includes(name)) counts[name] = await this.count(name);
    return counts;
  }

  close(): Promise<void> {
    return new Promise((resolve, reject) => this.handle.close((error) => (error ? reject(error) : resolve())));
  }
}
