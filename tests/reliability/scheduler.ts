import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import type { RunningApp } from '../support/app';
import { databaseUrlFor } from '../support/temp-db';

const ROOT = path.resolve(__dirname, '../..');

/** Every job each second (node-cron's six-field form), so tests see many cycles in a few seconds. */
export const FAST_CRONS = {
  INGEST_CRON: '*/1 * * * * *',
  ANALYSIS_CRON: '*/1 * * * * *',
  MAIL_CRON: '*/1 * * * * *',
  DIGEST_CRON: '0 0 1 1 *',
};

export interface SchedulerProcess {
  process: ChildProcess;
  output: () => string;
  exited: Promise<number | null>;
}

/**
 * A scheduler process of our own (`jobs/scheduler.ts`) on the app's DATA_DIR, delivering to the app's mail sink. The
 * rest of the environment is this process's, so a DATABASE_URL reaches the scheduler as it reached the test.
 */
export function startScheduler(app: Pick<RunningApp, 'dataDir' | 'mailSinkPort' | 'baseUrl'>, env: Record<string, string> = {}): SchedulerProcess {
  let output = '';
  const child = spawn(process.execPath, ['--import', 'tsx', path.join(ROOT, 'jobs/scheduler.ts')], {
    cwd: ROOT,
    env: {
      ...process.env,
      DATA_DIR: app.dataDir,
      DATABASE_PATH: '',
      DATABASE_URL: databaseUrlFor(app.dataDir) ?? '',
      MAIL_SINK_PORT: String(app.mailSinkPort),
      SMTP_URL: '',
      NEXTAUTH_URL: app.baseUrl,
      ...FAST_CRONS,
      ...env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  child.stdout!.on('data', (d) => (output += d));
  child.stderr!.on('data', (d) => (output += d));
  const exited = new Promise<number | null>((resolve) => child.once('exit', (code) => resolve(code)));
  return { process: child, output: () => output, exited };
}

export async function stopScheduler(scheduler: SchedulerProcess): Promise<void> {
  if (scheduler.process.exitCode !== null || scheduler.process.signalCode !== null) return;
  scheduler.process.kill('SIGTERM');
  await scheduler.exited;
}

export async function waitFor<T>(what: string, probe: () => Promise<T | null | undefined | false>, timeoutMs = 60_000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const value = await probe();
    if (value) return value;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

/** Messages the local sink received, with their Message-ID headers. */
export function sinkMessages(app: RunningApp): { file: string; messageId: string | null }[] {
  const dir = path.join(app.dataDir, 'mailbox');
  if (!fs.existsSync(dir)) return [];
  return fs
    .readdirSync(dir)
    .filter((f) => f.endsWith('.eml'))
    .map((file) => {
      const raw = fs.readFileSync(path.join(dir, file), 'utf8');
      return { file, messageId: /^message-id:\s*(\S+)/im.exec(raw)?.[1] ?? null };
    });
}

/** A daily CSV of `rows` points from `startDay`, with a variance that grows along the record. */
export function dailyCsv(startDay: number, rows: number, seed: number): string {
  const lines = ['time,value'];
  let state = seed;
  for (let i = 0; i < rows; i++) {
    // Park–Miller minimal standard generator (Park & Miller 1988), enough for test noise.
    state = (state * 16807) % 2147483647;
    const noise = state / 2147483647 - 0.5;
    lines.push(`${new Date((startDay + i) * 86_400_000).toISOString()},${(10 + noise * (1 + (startDay + i) / 200)).toFixed(6)}`);
  }
  return `${lines.join('\n')}\n`;
}
