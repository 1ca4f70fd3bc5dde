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

/** Outgoing mail server: SMTP_URL when set, else the local stand-in that `npm start` runs on MAIL_SINK_PORT. */
export function smtpUrl(): string {
  return process.env.SMTP_URL || `smtp://127.0.0.1:${Number(process.env.MAIL_SINK_PORT || 2525)}`;
}

export function mailFrom(): string {
  return process.env.MAIL_FROM || 'Brinkwatch <brinkwatch@localhost>';
}

/**
 * Outbox retry policy: the n-th failed attempt waits min(base·2^(n−1), max) before the next one, and a message is
 * marked failed only after MAIL_MAX_ATTEMPTS. Defaults (30 s doubling to 10 min, 60 attempts) keep retrying for
 * about nine hours, so an hour-long outage of the mail server loses nothing.
 */
export function mailRetryPolicy(): { baseMs: number; maxMs: number; maxAttempts: number } {
  return {
    baseMs: Number(process.env.MAIL_RETRY_BASE_MS || 30_000),
    maxMs: Number(process.env.MAIL_RETRY_MAX_MS || 600_000),
    maxAttempts: Number(process.env.MAIL_MAX_ATTEMPTS || 60),
  };
}
