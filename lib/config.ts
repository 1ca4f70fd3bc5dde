import path from 'node:path';

/**
 * Runtime configuration, read from the environment each time so tests can point a process at a
 * temp DATA_DIR. Every variable here is listed in `.env.example` and the README.
 */
export function dataDir(): string {
  return path.resolve(/*turbopackIgnore: true*/ process.env.DATA_DIR || './data');
}

export function databasePath(): string {
  return path.resolve(/*turbopackIgnore: true*/ process.env.DATABASE_PATH || path.join(dataDir(), 'brinkwatch.sqlite'));
}

export function dropDir(): string {
  return path.resolve(/*turbopackIgnore: true*/ process.env.DROP_DIR || path.join(dataDir(), 'drops'));
}

export function mailboxDir(): string {
  return path.join(/*turbopackIgnore: true*/ dataDir(), 'mailbox');
}

export function appPort(): number {
  return Number(process.env.PORT || 3000);
}

export function publicBaseUrl(): string {
  return (process.env.NEXTAUTH_URL || `http://localhost:${appPort()}`).replace(/\/$/, '');
}

export function cronSetting(name: 'INGEST_CRON' | 'ANALYSIS_CRON' | 'MAIL_CRON' | 'DIGEST_CRON'): string {
  const defaults = {
    INGEST_CRON: '* * * * *',
    ANALYSIS_CRON: '*/2 * * * *',
    MAIL_CRON: '*/15 * * * * *',
    DIGEST_CRON: '0 7 * * *',
  } as const;
  return process.env[name] || defaults[name];
}

/** Busy timeout for SQLite in ms: a writer waits this long for a lock before failing with SQLITE_BUSY. */
export function busyTimeoutMs(): number {
  return Number(process.env.DB_BUSY_TIMEOUT_MS || 5000);
}
