import { spawnSync } from 'node:child_process';
import path from 'node:path';

const ROOT = path.resolve(__dirname, '../..');

/** The installed command line (`bin/brinkwatch.mjs`) run as a reviewer runs it, from the project root; 2 minutes at most. */
export function brinkwatch(args: string[]) {
  return spawnSync(process.execPath, [path.join(ROOT, 'bin/brinkwatch.mjs'), ...args], { encoding: 'utf8', cwd: ROOT, timeout: 120_000 });
}
