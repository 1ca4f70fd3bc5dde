import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

/**
 * Points this test file's process at a fresh DATA_DIR (and so a fresh SQLite file). Call before the first
 * database access; vitest runs each file in its own process, so files never share a database.
 */
export function useTempDataDir(prefix = 'bw-test-'): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), prefix));
  process.env.DATA_DIR = dir;
  delete process.env.DATABASE_PATH;
  return dir;
}
