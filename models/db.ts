import fs from 'node:fs';
import path from 'node:path';
import pg from 'pg';
import sqlite3 from 'sqlite3';
import { Sequelize, Transaction } from 'sequelize';
import { busyTimeoutMs, config, databaseDialect, databaseLocation, databasePath } from '@/lib/runtime/config';
import { closeReadCache } from '@/lib/db/read-cache';

type Cached = { sequelize: Sequelize; path: string; ready: Promise<void> };

/** PostgreSQL's advisory lock key that every write transaction takes, so writers queue as they do on SQLite. */
export const WRITE_LOCK_KEY = 4_212_031_733;
/** Tries at the write lock on PostgreSQL, as many as SQLite's busy retries. */
const WRITE_LOCK_ATTEMPTS = 5;

// Counts, sums and BIGINT columns (instants in ms, ids) arrive from pg as strings; every one of them fits a double
// exactly (instants and counts stay below 2^53), which is how SQLite hands them back too.
pg.types.setTypeParser(pg.types.builtins.INT8, (value) => Number(value));
pg.types.setTypeParser(pg.types.builtins.NUMERIC, (value) => Number(value));
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

function openPostgres(url: string): Cached {
  const sequelize = new Sequelize(url, {
    dialect: 'postgres',
    dialectModule: pg,
    logging: config().DB_LOG ? console.log : false,
    define: { underscored: true },
    pool: { max: 10, min: 0, idle: 10_000, acquire: 60_000 },
  });
  const ready = sequelize.query('SELECT 1').then(() => undefined);
  // An unreachable server is reported by the caller's first query; the probe's own failure is not an unhandled one.
  ready.catch(() => undefined);
  return { sequelize, path: url, ready };
}

/**
 * The one Sequelize instance of this process (cached on globalThis so dev reloads and test files share it per
 * database): PostgreSQL when DATABASE_URL is set, else the SQLite file.
 */
export function getSequelize(): Sequelize {
  const location = databaseLocation();
  const cached = globalCache.__brinkwatchDb;
  if (cached && cached.path === location) return cached.sequelize;
  if (databaseDialect() === 'postgres') {
    globalCache.__brinkwatchDb = openPostgres(location);
    return globalCache.__brinkwatchDb.sequelize;
  }
  const file = databasePath();
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

/** Resolves once the connection pragmas (WAL, synchronous) are set, or PostgreSQL answered. */
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
 * timeout instead of one failing on lock upgrade half-way through. On PostgreSQL the same guarantee (what a write
 * transaction read is still true when it commits, because no other write transaction runs meanwhile) comes from one
 * transaction-scoped advisory lock every write transaction takes first (released at COMMIT or ROLLBACK).
 */
export async function writeTransaction<T>(work: (transaction: Transaction) => Promise<T>): Promise<T> {
  const sequelize = await databaseReady();
  if (sequelize.getDialect() !== 'postgres') return sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, work);
  // As SQLite's busy waits are retried (`retry` above), a wait for the write lock that timed out is tried again, up to
  // the same number of times; only then, since nothing of `work` has run yet, is it safe to start over.
  for (let attempt = 1; ; attempt++) {
    let locked = false;
    try {
      return await sequelize.transaction(async (transaction) => {
        // The wait is bounded as SQLite's busy timeout bounds it; lib/http/handler.ts answers 503 on either.
        await sequelize.query(`SET LOCAL lock_timeout = ${Number(busyTimeoutMs())}`, { transaction });
        await sequelize.query(`SELECT pg_advisory_xact_lock(${WRITE_LOCK_KEY})`, { transaction });
        locked = true;
        return work(transaction);
      });
    } catch (error) {
      const timedOut = (error as { parent?: { code?: string } }).parent?.code === '55P03';
      if (locked || !timedOut || attempt >= WRITE_LOCK_ATTEMPTS) throw error;
    }
  }
}

/**
 * Runs `work` in a read transaction that sees one moment of the database: SQLite's DEFERRED transaction (a read
 * snapshot from its first read on), PostgreSQL's REPEATABLE READ (a snapshot from its first statement on).
 */
export async function readTransaction<T>(work: (transaction: Transaction) => Promise<T>): Promise<T> {
  const sequelize = await databaseReady();
  if (sequelize.getDialect() !== 'postgres') return sequelize.transaction({ type: Transaction.TYPES.DEFERRED }, work);
  return sequelize.transaction({ isolationLevel: Transaction.ISOLATION_LEVELS.REPEATABLE_READ }, work);
}
