import { execFileSync } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

/**
 * Each test file gets a database of its own. On SQLite (the default) that is a fresh DATA_DIR and so a fresh file;
 * when the file runs in the PostgreSQL project (`BRINKWATCH_TEST_DIALECT=postgres`, see vitest.config.mts) it is a
 * fresh `bw_test_<random>` database on the server of BRINKWATCH_TEST_POSTGRES_URL (scripts/test-postgres.sh),
 * dropped when the test process exits. The database a data folder uses is written into the folder
 * (`test-database-url`), so a product restarted on the same folder (tests/support/app.ts) finds the same data.
 */

const URL_FILE = 'test-database-url';

export function testDialect(): 'sqlite' | 'postgres' {
  return process.env.BRINKWATCH_TEST_DIALECT === 'postgres' ? 'postgres' : 'sqlite';
}

const created: string[] = [];

/** Runs one statement on the test server's maintenance database, synchronously (test files set up at import). */
function adminStatement(sql: string): void {
  const server = process.env.BRINKWATCH_TEST_POSTGRES_URL;
  if (!server) throw new Error('BRINKWATCH_TEST_DIALECT=postgres needs BRINKWATCH_TEST_POSTGRES_URL (scripts/test-postgres.sh start)');
  const script =
    "const { Client } = require('pg'); const c = new Client(process.argv[1]);" +
    'c.connect().then(() => c.query(process.argv[2])).then(() => c.end(), (e) => { console.error(e.message); process.exit(1); });';
  execFileSync(process.execPath, ['-e', script, server, sql], { cwd: path.resolve(__dirname, '../..'), stdio: ['ignore', 'ignore', 'inherit'] });
}

function createPostgresDatabase(): string {
  const name = `bw_test_${crypto.randomBytes(6).toString('hex')}`;
  adminStatement(`CREATE DATABASE ${name}`);
  if (created.length === 0) {
    process.once('exit', () => {
      for (const database of created) {
        try {
          adminStatement(`DROP DATABASE IF EXISTS ${database} WITH (FORCE)`);
        } catch {
          // the throwaway server is removed as a whole at the end of the run
        }
      }
    });
  }
  created.push(name);
  const url = new URL(process.env.BRINKWATCH_TEST_POSTGRES_URL!);
  url.pathname = `/${name}`;
  return url.toString();
}

/**
 * The DATABASE_URL a product started on `dataDir` uses in the PostgreSQL project (created on first use, then the
 * same for every start on that folder); undefined on SQLite, where the folder holds the file.
 */
export function databaseUrlFor(dataDir: string): string | undefined {
  if (testDialect() !== 'postgres') return undefined;
  const file = path.join(dataDir, URL_FILE);
  if (fs.existsSync(file)) return fs.readFileSync(file, 'utf8');
  const url = createPostgresDatabase();
  fs.writeFileSync(file, url);
  return url;
}

/**
 * Points this test file's process at a fresh DATA_DIR and a fresh database (a SQLite file in it, or a new
 * PostgreSQL database). Call before the first database access; vitest runs each file in its own process, so files
 * never share a database.
 */
export function useTempDataDir(prefix = 'bw-test-'): string {
  return useDataDir(fs.mkdtempSync(path.join(os.tmpdir(), prefix)));
}

/** Points this test file's process at `dir` and its database (the one a product started on `dir` uses too). */
export function useDataDir(dir: string): string {
  process.env.DATA_DIR = dir;
  delete process.env.DATABASE_PATH;
  const url = databaseUrlFor(dir);
  if (url) process.env.DATABASE_URL = url;
  else delete process.env.DATABASE_URL;
  return dir;
}
