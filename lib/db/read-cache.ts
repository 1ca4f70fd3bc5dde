import sqlite3, { type Database } from 'sqlite3';
import { Client } from 'pg';
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
 * The probe runs on a connection of its own, as on SQLite.
 */

const MAX_ENTRIES = 512;

type Version = number | string;

interface Entry {
  version: Version;
  value: Promise<unknown>;
}

/** A connection of its own that reads the database's change marker; it never writes. */
interface Probe {
  version(): Promise<Version | null>;
  close(): Promise<void>;
}

interface State {
  path: string;
  probe: Promise<Probe>;
  entries: Map<string, Entry>;
}

const holder = globalThis as unknown as { __brinkwatchReadCache?: State };

function sqliteProbe(file: string): Promise<Probe> {
  return new Promise((resolve, reject) => {
    // Opened read-write only so SQLite can share the WAL index; this connection never writes.
    const connection: Database = new sqlite3.Database(file, sqlite3.OPEN_READWRITE, (error) =>
      error
        ? reject(error)
        : resolve({
            version: () =>
              new Promise((answer) =>
                connection.get('PRAGMA data_version', (failure, row: { data_version: number } | undefined) =>
                  answer(failure || !row ? null : Number(row.data_version)),
                ),
              ),
            close: () => new Promise((closed) => connection.close(() => closed())),
          }),
    );
    connection.configure('busyTimeout', busyTimeoutMs());
  });
}

async function postgresProbe(url: string, forget: () => void): Promise<Probe> {
  const client = new Client(url);
  // A connection the server closed is replaced at the next read; meanwhile nothing is cached.
  client.on('error', forget);
  await client.connect();
  return {
    version: async () => {
      try {
        return (await client.query<{ v: string }>('SELECT pg_current_snapshot()::text AS v')).rows[0]?.v ?? null;
      } catch {
        forget();
        return null;
      }
    },
    close: () => client.end().catch(() => undefined),
  };
}

function state(): State {
  const location = databaseLocation();
  const current = holder.__brinkwatchReadCache;
  if (current && current.path === location) return current;
  if (current)
    void current.probe.then(
      (p) => p.close(),
      () => undefined,
    );
  const forget = () => {
    if (holder.__brinkwatchReadCache?.probe === probe) holder.__brinkwatchReadCache = undefined;
  };
  const probe = databaseDialect() === 'postgres' ? postgresProbe(location, forget) : sqliteProbe(databasePath());
  // A failed open is retried on the next read rather than remembered.
  probe.catch(forget);
  holder.__brinkwatchReadCache = { path: location, probe, entries: new Map() };
  return holder.__brinkwatchReadCache;
}

/** The database's change marker as seen from the probe connection; null when it cannot be read (then nothing is cached). */
async function dataVersion(current: State): Promise<Version | null> {
  const probe = await current.probe.catch(() => null);
  return probe ? probe.version() : null;
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
  if (!current) return;
  const probe = await current.probe.catch(() => null);
  if (probe) await probe.close();
}
