import sqlite3, { type Database } from 'sqlite3';
import { QueryTypes, type Sequelize } from 'sequelize';
import { busyTimeoutMs, databaseDialect, databaseLocation, databasePath } from '@/lib/runtime/config';

/**
 * Answers of hot reads (the overview, alert queues, the series workbench and detail, the series pickers, the
 * signed-in user) kept between requests for as long as the database has not changed, and never longer.
 *
 * Change detection is SQLite's `PRAGMA data_version` (https://sqlite.org/pragma.html#pragma_data_version): its value
 * on one connection changes whenever *another* connection commits, across processes too (WAL index). The probe runs
 * on a connection of its own that never writes, so every commit anywhere — this web process, another one, the
 * scheduler, a script — is another connection's and shows. A read is stored under the version seen *before* it ran,
 * so an answer that raced a commit is dropped at the next request, never served after it. Cost: one PRAGMA per read.
 *
 * On PostgreSQL the version is the text of `pg_current_snapshot()` (PostgreSQL ≥ 13,
 * https://www.postgresql.org/docs/current/functions-info.html#FUNCTIONS-PG-SNAPSHOT): xmin, xmax and the
 * transactions in progress. A transaction that commits between two probes either was in progress at the first
 * (and has left the list at the second) or had no id yet (and the second's xmax is past it), so equal texts mean
 * no commit in between, on every server process and machine; read-only transactions take no id and change nothing.
 * The probe is one round trip on the pool, as the PRAGMA is one on the probe connection.
 */

const MAX_ENTRIES = 512;

type Version = number | string;

interface Entry {
  version: Version;
  value: Promise<unknown>;
}

interface State {
  path: string;
  /** The SQLite probe connection; null on PostgreSQL, whose probe runs on the pool. */
  probe: Promise<Database> | null;
  entries: Map<string, Entry>;
}

const holder = globalThis as unknown as { __brinkwatchReadCache?: State };

function openProbe(file: string): Promise<Database> {
  return new Promise((resolve, reject) => {
    // Opened read-write only so SQLite can share the WAL index; this connection never writes.
    const connection = new sqlite3.Database(file, sqlite3.OPEN_READWRITE, (error) => (error ? reject(error) : resolve(connection)));
    connection.configure('busyTimeout', busyTimeoutMs());
  });
}

function state(): State {
  const location = databaseLocation();
  const current = holder.__brinkwatchReadCache;
  if (current && current.path === location) return current;
  if (current?.probe)
    void current.probe.then(
      (c) => c.close(),
      () => undefined,
    );
  if (databaseDialect() === 'postgres') {
    holder.__brinkwatchReadCache = { path: location, probe: null, entries: new Map() };
    return holder.__brinkwatchReadCache;
  }
  const file = databasePath();
  const probe = openProbe(file);
  // A failed open is retried on the next read rather than remembered.
  probe.catch(() => {
    if (holder.__brinkwatchReadCache?.probe === probe) holder.__brinkwatchReadCache = undefined;
  });
  holder.__brinkwatchReadCache = { path: location, probe, entries: new Map() };
  return holder.__brinkwatchReadCache;
}

/** PostgreSQL's current snapshot as text (see above); null when it cannot be read. */
async function snapshotVersion(): Promise<string | null> {
  // Imported here: models/db.ts imports this module to close it.
  const { getSequelize } = await import('@/models/db');
  const sequelize: Sequelize = getSequelize();
  try {
    const [row] = await sequelize.query<{ v: string }>('SELECT pg_current_snapshot()::text AS v', { type: QueryTypes.SELECT });
    return row?.v ?? null;
  } catch {
    return null;
  }
}

/** The database's change counter as seen from the probe connection; null when it cannot be read (then nothing is cached). */
async function dataVersion(current: State): Promise<Version | null> {
  if (!current.probe) return snapshotVersion();
  const connection = await current.probe.catch(() => null);
  if (!connection) return null;
  return new Promise((resolve) =>
    connection.get('PRAGMA data_version', (error, row: { data_version: number } | undefined) => resolve(error || !row ? null : Number(row.data_version))),
  );
}

/**
 * `load()`'s answer for `key`, reused while the database is unchanged. `load` must be a pure read whose answer
 * depends only on `key` and the database (no clock, no caller identity left out of the key), and callers must not
 * mutate what they get back. Concurrent misses of one key share a single load. Errors are not kept.
 */
export async function cachedRead<T>(key: string, load: () => Promise<T>): Promise<T> {
  const current = state();
  const version = await dataVersion(current);
  if (version === null) return load();
  const hit = current.entries.get(key);
  if (hit && hit.version === version) {
    // Map order doubles as recency for the size bound.
    current.entries.delete(key);
    current.entries.set(key, hit);
    return hit.value as Promise<T>;
  }
  const value = load();
  const entry: Entry = { version, value };
  current.entries.set(key, entry);
  if (current.entries.size > MAX_ENTRIES) current.entries.delete(current.entries.keys().next().value!);
  value.catch(() => {
    if (current.entries.get(key) === entry) current.entries.delete(key);
  });
  return value;
}

/** Closes the probe connection and forgets every answer (tests and scripts that switch or close databases). */
export async function closeReadCache(): Promise<void> {
  const current = holder.__brinkwatchReadCache;
  holder.__brinkwatchReadCache = undefined;
  if (!current?.probe) return;
  const connection = await current.probe.catch(() => null);
  if (connection) await new Promise<void>((resolve) => connection.close(() => resolve()));
}
