import { spawnSync } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';

const ROOT = process.cwd();
/** Everything that changes what `next build` produces. */
const BUILD_INPUTS = [
  'app',
  'components',
  'lib',
  'models',
  'migrations',
  'types',
  'proxy.ts',
  'next.config.mjs',
  'tailwind.config.ts',
  'postcss.config.mjs',
  'package-lock.json',
];

function distDir(): string {
  return path.join(ROOT, process.env.NEXT_DIST_DIR || '.next');
}

function walk(entry: string, files: string[]): void {
  const full = path.join(ROOT, entry);
  if (!fs.existsSync(full)) return;
  if (fs.statSync(full).isDirectory()) {
    for (const child of fs.readdirSync(full).sort()) walk(path.join(entry, child), files);
  } else {
    files.push(entry);
  }
}

/** A digest of the build inputs' contents, so a build is redone exactly when a source changed. */
function sourceDigest(): string {
  const files: string[] = [];
  for (const entry of BUILD_INPUTS) walk(entry, files);
  const hash = crypto.createHash('sha256');
  for (const file of files) {
    hash.update(file);
    hash.update(fs.readFileSync(path.join(ROOT, file)));
  }
  return hash.digest('hex');
}

/** False when the lock names a process that no longer exists, or has had no pid file for a minute (its holder died at once). */
function holderAlive(lock: string): boolean {
  const file = path.join(lock, 'pid');
  const pid = fs.existsSync(file) ? Number(fs.readFileSync(file, 'utf8').trim()) : 0;
  if (!pid) return Date.now() - (fs.statSync(lock, { throwIfNoEntry: false })?.mtimeMs ?? 0) < 60_000;
  try {
    process.kill(pid, 0);
    return true;
  } catch (error) {
    return (error as NodeJS.ErrnoException).code !== 'ESRCH';
  }
}

function sleep(ms: number): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, ms));
}

/**
 * Runs `next build` when the production build is missing or older than the sources. A lock directory keeps
 * concurrent callers (test files in parallel, a start beside a test) from building over each other.
 * `distDirName` (relative to the project) builds elsewhere than `.next`, e.g. one folder per source digest.
 */
export async function buildIfNeeded(log: (line: string) => void = console.log, distDirName?: string): Promise<void> {
  const target = distDirName ? path.join(ROOT, distDirName) : distDir();
  const stamp = path.join(target, 'brinkwatch-source-digest');
  const lock = `${target}.build-lock`;
  for (;;) {
    const digest = sourceDigest();
    if (fs.existsSync(stamp) && fs.readFileSync(stamp, 'utf8') === digest && fs.existsSync(path.join(target, 'BUILD_ID'))) return;
    try {
      fs.mkdirSync(lock, { recursive: false });
      fs.writeFileSync(path.join(lock, 'pid'), String(process.pid));
    } catch {
      // A build can take many minutes on a busy machine, so the lock is stale only when its holder is gone.
      if (!holderAlive(lock)) fs.rmSync(lock, { recursive: true, force: true });
      await sleep(1000);
      continue;
    }
    try {
      log('Building the application (first start or sources changed)…');
      const result = spawnSync(process.execPath, [path.join(ROOT, 'node_modules/next/dist/bin/next'), 'build'], {
        cwd: ROOT,
        stdio: ['ignore', 'pipe', 'pipe'],
        env: { ...process.env, NEXT_TELEMETRY_DISABLED: '1', NEXT_DIST_DIR: path.relative(ROOT, target) },
        encoding: 'utf8',
        maxBuffer: 64 * 1024 * 1024,
      });
      if (result.status !== 0) {
        throw new Error(`next build failed:\n${result.stdout}\n${result.stderr}`);
      }
      fs.writeFileSync(stamp, digest);
      return;
    } finally {
      fs.rmSync(lock, { recursive: true, force: true });
    }
  }
}

/**
 * For tests: a build folder per source digest under `.next-builds/`, so a rebuild after an edit never replaces
 * the files under a server that is still running. Folders older than an hour are removed. Returns the folder name.
 */
export async function buildForDigest(): Promise<string> {
  const parent = path.join(ROOT, '.next-builds');
  fs.mkdirSync(parent, { recursive: true });
  const name = path.join('.next-builds', sourceDigest().slice(0, 16));
  for (const entry of fs.readdirSync(parent)) {
    const full = path.join(parent, entry);
    // Another test process may remove the same old folder between the listing and this look at it.
    const stat = fs.statSync(full, { throwIfNoEntry: false });
    if (stat && full !== path.join(ROOT, name) && Date.now() - stat.mtimeMs > 60 * 60 * 1000) {
      fs.rmSync(full, { recursive: true, force: true });
    }
  }
  await buildIfNeeded(() => undefined, name);
  return name;
}
