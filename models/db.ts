import fs from 'node:fs';
import path from 'node:path';
import sqlite3, { type Database } from 'sqlite3';
import { Sequelize, Transaction } from 'sequelize';
import { busyTimeoutMs, config, databasePath } from '@/lib/runtime/config';
import { closeReadCache } from '@/lib/db/read-cache';

type Cached = { sequelize: Sequelize; path: string; ready: Promise<void> };
const globalCache = globalThis as unknown as { __brinkwatchDb?: Cached };

interface RawSqliteConnection {
  configure(option: 'busyTimeout', value: number): void;
}

/**
 * Sequelize's SQLite dialect opens a fresh connection per transaction and offers no connect hook, so the busy
 * timeout is applied here to every connection it hands out; otherwise a second writer fails at once with
 * SQLITE_BUSY instead of waiting its turn.
 */
function applyBusyTimeout(sequelize: Sequelize): void {
  const manager = sequelize.connectionManager as unknown as {
    getConnection(options?: unknown): Promise<RawSqliteConnection>;
  };
  const open = manager.getConnection.bind(manager);
  const configured = new WeakSet<RawSqliteConnection>();
  manager.getConnection = async (options?: unknown) => {
    const connection = await open(options);
    if (!configured.has(connection)) {
      connection.configure('busyTimeout', busyTimeoutMs());
      configured.add(connection);
    }
    return connection;
  };
}

/** The one Sequelize instance of this process (cached on globalThis so dev reloads and test files share it per path). */
export function getSequelize(): Sequelize {
  const file = databasePath();
  const cached = globalCache.__brinkwatchDb;
  if (cached && cached.path === file) return cached.sequelize;
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const sequelize = new Sequelize({
    dialect: 'sqlite',
    dialectModule: sqlite3,
    storage: file,
    logging: config().DB_LOG ? console.log : false,
    define: { underscored: true },
    retry: { max: 5, match: [/SQLITE_BUSY/] },
  });
  applyBusyTimeout(sequelize);
  const ready = (async () => {
    await sequelize.query('PRAGMA journal_mode=WAL');
    await sequelize.query('PRAGMA synchronous=NORMAL');
  })();
  globalCache.__brinkwatchDb = { sequelize, path: file, ready };
  return sequelize;
}

/** Resolves once the connection pragmas (WAL, synchronous) are set. */
export async function databaseReady(): Promise<Sequelize> {
  const sequelize = getSequelize();
  await globalCache.__brinkwatchDb!.ready;
  return sequelize;
}

/** Closes the cached instance (tests and scripts that exit). */
export async function closeDatabase(): Promise<void> {
  await closeReadCache();
  const cached = globalCache.__brinkwatchDb;
  if (!cached) return;
  globalCache.__brinkwatchDb = undefined;
  // sqlite3 never calls back when closing a handle whose open failed (an unreachable file), so do not wait forever.
  await Promise.race([cached.sequelize.close().catch(() => undefined), new Promise((resolve) => setTimeout(resolve, 2000).unref())]);
}

/**
 * Runs `work` in an IMMEDIATE transaction: SQLite takes the write lock at BEGIN, so two writers queue on the busy
 * timeout instead of one failing on lock upgrade half-way through.
 */
export async function writeTransaction<T>(work: (transaction: Transaction) => Promise<T>): Promise<T> {
  const sequelize = await databaseReady();
  return sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, work);
}

/**
 * The process's shared sqlite3 handle, for hot reads of many rows (observation ranges) where building a Sequelize
 * result per row costs more than the query itself.
 */
export async function rawReadConnection(): Promise<Database> {
  const sequelize = await databaseReady();
  const manager = sequelize.connectionManager as unknown as { getConnection(options: { uuid: string }): Promise<Database> };
  return manager.getConnection({ uuid: 'default' });
}

/** `Database#all` as a promise. */
export function allRows<T>(connection: Database, sql: string, params: unknown[]): Promise<T[]> {
  return new Promise((resolve, reject) => connection.all(sql, params, (error, rows) => (error ? reject(error) : resolve(rows as T[]))));
}
