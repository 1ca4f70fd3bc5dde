import { spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';

const ROOT = path.resolve(__dirname, '../..');

/**
 * Runs a TypeScript snippet against an app's DATA_DIR in a separate Node process (as an operator would with a
 * script), so a test never opens the app's database inside its own process. Resolves with the snippet's stdout.
 */
export async function runInApp(dataDir: string, body: string, env: Record<string, string> = {}): Promise<string> {
  fs.mkdirSync(path.join(ROOT, '.tmp'), { recursive: true });
  const file = path.join(ROOT, '.tmp', `snippet-${process.pid}-${Date.now()}-${Math.random().toString(36).slice(2)}.mts`);
  fs.writeFileSync(file, `${body}\n`);
  try {
    return await new Promise<string>((resolve, reject) => {
      const child = spawn(process.execPath, ['--import', 'tsx', file], {
        cwd: ROOT,
        env: { ...process.env, DATA_DIR: dataDir, DATABASE_PATH: '', ...env },
        stdio: ['ignore', 'pipe', 'pipe'],
      });
      let stdout = '';
      let stderr = '';
      child.stdout.on('data', (d) => (stdout += d));
      child.stderr.on('data', (d) => (stderr += d));
      child.on('error', reject);
      child.on('exit', (code) => (code === 0 ? resolve(stdout) : reject(new Error(`snippet failed (${code}):\n${stderr}`))));
    });
  } finally {
    fs.rmSync(file, { force: true });
  }
}

/** Runs a snippet that prints one JSON value as its last line, and parses it. */
export async function queryApp<T>(dataDir: string, body: string, env?: Record<string, string>): Promise<T> {
  const out = (await runInApp(dataDir, body, env)).trim().split('\n');
  return JSON.parse(out[out.length - 1]) as T;
}
