import { spawn, type ChildProcess } from 'node:child_process';
import fs from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { buildForDigest } from '@/lib/runtime/build';
import { databaseUrlFor } from './temp-db';

const ROOT = path.resolve(__dirname, '../..');

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = net.createServer();
    server.unref();
    server.on('error', reject);
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address() as net.AddressInfo;
      server.close(() => resolve(port));
    });
  });
}

export interface RunningApp {
  baseUrl: string;
  port: number;
  mailSinkPort: number;
  dataDir: string;
  process: ChildProcess;
  output: () => string;
  stop: () => Promise<void>;
}

export interface StartOptions {
  /** Seed the demo network (default false: only the four demo users). */
  demo?: boolean;
  scheduler?: boolean;
  dataDir?: string;
  env?: Record<string, string>;
}

export const DEMO_PASSWORD = 'test-password-123';

/**
 * Starts the real product (`scripts/start.ts`: migrations, seed, web server, scheduler, mail sink) on free
 * loopback ports and a temp DATA_DIR (and, in the PostgreSQL project, the database of that folder: `databaseUrlFor`),
 * and waits until /api/health answers.
 */
export async function startApp(options: StartOptions = {}): Promise<RunningApp> {
  const distDir = await buildForDigest();
  const dataDir = options.dataDir ?? fs.mkdtempSync(path.join(os.tmpdir(), 'bw-app-'));
  // A port found free can be taken by a parallel test before the app binds it; then try other ports.
  for (let attempt = 1; ; attempt++) {
    try {
      return await launch(options, distDir, dataDir);
    } catch (error) {
      if (!(error instanceof PortTakenError) || attempt === 3) throw error;
    }
  }
}

class PortTakenError extends Error {}

async function launch(options: StartOptions, distDir: string, dataDir: string): Promise<RunningApp> {
  const port = await freePort();
  const mailSinkPort = await freePort();
  let output = '';
  const child = spawn(process.execPath, ['--import', 'tsx', path.join(ROOT, 'scripts/start.ts')], {
    cwd: ROOT,
    env: {
      ...process.env,
      DATA_DIR: dataDir,
      DATABASE_PATH: '',
      DATABASE_URL: databaseUrlFor(dataDir) ?? '',
      PORT: String(port),
      HOST: '127.0.0.1',
      NEXTAUTH_URL: `http://localhost:${port}`,
      NEXTAUTH_SECRET: '',
      MAIL_SINK_PORT: String(mailSinkPort),
      SMTP_URL: '',
      DEMO_PASSWORD,
      SEED_DEMO: options.demo ? '1' : '0',
      SKIP_BUILD: '1',
      NEXT_DIST_DIR: distDir,
      START_SCHEDULER: options.scheduler === false ? '0' : '1',
      ...options.env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
    detached: true,
  });
  child.stdout!.on('data', (d) => (output += d));
  child.stderr!.on('data', (d) => (output += d));
  const baseUrl = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 120_000;
  for (;;) {
    if (child.exitCode !== null) {
      throw /EADDRINUSE/.test(output) ? new PortTakenError(output) : new Error(`app exited early:\n${output}`);
    }
    try {
      const response = await fetch(`${baseUrl}/api/health`);
      if (response.status === 200) break;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) throw new Error(`app did not become healthy:\n${output}`);
    await new Promise((r) => setTimeout(r, 300));
  }
  let stopping = false;
  // A product that dies under a test leaves only "connection refused" behind; its own last words say why.
  child.once('exit', (code, signal) => {
    if (!stopping) console.error(`[test app on port ${port}] exited unexpectedly (${signal ?? code}); its last output:\n${output.slice(-6000)}`);
  });
  return {
    baseUrl,
    port,
    mailSinkPort,
    dataDir,
    process: child,
    output: () => output,
    stop: async () => {
      stopping = true;
      if (child.exitCode !== null) return;
      const exited = new Promise((r) => child.once('exit', r));
      try {
        process.kill(-child.pid!, 'SIGTERM');
      } catch {
        return;
      }
      const timer = setTimeout(() => {
        try {
          process.kill(-child.pid!, 'SIGKILL');
        } catch {
          // already gone
        }
      }, 5000);
      await exited;
      clearTimeout(timer);
    },
  };
}

/** Polls `probe` every quarter second until it gives a value; past the deadline fails with the app's recent output. */
export async function waitFor<T>(app: RunningApp, what: string, probe: () => T | null | undefined | false, timeoutMs = 30_000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const value = probe();
    if (value) return value;
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${what}\n${app.output().slice(-3000)}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}
