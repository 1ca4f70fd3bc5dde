import sqlite3, { type Database } from 'sqlite3';
import { busyTimeoutMs, databasePath } from '@/lib/runtime/config';

/**
 * Answers of hot reads (the overview, alert queues, the series workbench and detail, the series pickers, the
 * signed-in user) kept between requests for as long as the database has not changed, and never longer.
 *
 * Change detection is SQLite's `PRAGMA data_version` (https://sqlite.org/pragma.html#pragma_data_version): its value
 * on one connection changes whenever *another* connection commits, across processes too (WAL index). The probe runs
 * on a connection of its own that never writes, so every commit anywhere — this web process, another one, the
 * scheduler, a script — is another connection's and shows. A read is stored under the version seen *before* it ran,
 * so an answer that raced a commit is dropped at the next request, never served after it. Cost: one PRAGMA per read.
 */

const MAX_ENTRIES = 512;

interface Entry {
  version: number;
  value: Promise<unknown>;
}

interface State {
  path: string;
  probe: Promise<Database>;
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
  const file = databasePath();
  const current = holder.__brinkwatchReadCache;
  if (current && current.path === file) return current;
  if (current)
    void current.probe.then(
      (c) => c.close(),
      () => undefined,
    );
  const probe = openProbe(file);
  // A failed open is retried on the next read rather than remembered.
  probe.catch(() => {
    if (holder.__brinkwatchReadCache?.probe === probe) holder.__brinkwatchReadCache = undefined;
  });
  holder.__brinkwatchReadCache = { path: file, probe, entries: new Map() };
  return holder.__brinkwatchReadCache;
}

/** The database's change counter as seen from the probe connection; null when it cannot be read (then nothing is cached). */
async function dataVersion(current: State): Promise<number | null> {
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
  if (!current) return;
  const connection = await current.probe.catch(() => null);
  if (connection) await new Promise<void>((resolve) => connection.close(() => resolve()));
}
