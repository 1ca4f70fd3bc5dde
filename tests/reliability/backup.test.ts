import { spawn } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { DEMO_PASSWORD, startApp, type RunningApp } from '../support/app';
import { signedIn, type Session } from '../support/session';
import { RawDb } from './sqlite';

const ROOT = path.resolve(__dirname, '../..');

function npmBackup(dataDir: string, target: string): Promise<{ code: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const child = spawn('npm', ['run', '--silent', 'backup', '--', target], {
      cwd: ROOT,
      env: { ...process.env, DATA_DIR: dataDir, DATABASE_PATH: '' },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d) => (stdout += d));
    child.stderr.on('data', (d) => (stderr += d));
    child.on('exit', (code) => resolve({ code, stdout, stderr }));
  });
}

describe('npm run backup on a running, writing app', () => {
  let app: RunningApp;
  let lead: Session;
  beforeAll(async () => {
    app = await startApp({ demo: false, scheduler: false });
    lead = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
  });
  afterAll(async () => {
    await app?.stop();
  });

  test('the copy is consistent and complete for its moment, writers never fail, and a restore brings it back', async () => {
    const target = path.join(app.dataDir, 'copies', 'before-restore.sqlite');
    const created: string[] = [];
    let writing = true;
    const writer = (async () => {
      for (let i = 0; writing || created.length < 10; i++) {
        const slug = `backup-probe-${i}`;
        const response = await lead.json('/api/series', 'POST', { slug, name: `Backup probe ${i}` });
        expect(response.status).toBe(201);
        created.push(slug);
      }
    })();
    while (created.length < 3) await new Promise((r) => setTimeout(r, 20));
    const atStart = created.length;
    const result = await npmBackup(app.dataDir, target);
    const atEnd = created.length;
    writing = false;
    await writer;
    expect(result.code, result.stderr).toBe(0);
    expect(result.stdout.trim()).toBe(target);

    // A second backup never overwrites an existing file.
    const again = await npmBackup(app.dataDir, target);
    expect(again.code).not.toBe(0);
    expect(again.stderr).toMatch(/already exists/);

    const copy = await RawDb.open(target);
    try {
      // PRAGMA integrity_check answers the single row 'ok' for a sound file (https://www.sqlite.org/pragma.html#pragma_integrity_check).
      expect(await copy.all('PRAGMA integrity_check')).toEqual([{ integrity_check: 'ok' }]);
      expect(await copy.get('PRAGMA journal_mode')).toEqual({ journal_mode: 'delete' });
      expect(await copy.count('users')).toBe(4);
      const slugs = (await copy.all<{ slug: string }>("SELECT slug FROM series WHERE slug LIKE 'backup-probe-%'")).map((r) => r.slug);
      // One moment: every series created before the backup began is in it, none after it ended, and no gaps.
      expect(slugs.length).toBeGreaterThanOrEqual(atStart);
      expect(slugs.length).toBeLessThanOrEqual(atEnd);
      expect(new Set(slugs)).toEqual(new Set(created.slice(0, slugs.length)));
      const live = await RawDb.forDataDir(app.dataDir);
      const migrations = await live.all('SELECT name FROM schema_migrations ORDER BY name');
      await live.close();
      expect(await copy.all('SELECT name FROM schema_migrations ORDER BY name')).toEqual(migrations);
    } finally {
      await copy.close();
    }
    const inCopy = created.length;

    // The README's restore: stop, copy the file over DATABASE_PATH, remove -wal and -shm, start.
    await app.stop();
    const live = path.join(app.dataDir, 'brinkwatch.sqlite');
    fs.copyFileSync(target, live);
    for (const suffix of ['-wal', '-shm']) fs.rmSync(live + suffix, { force: true });
    app = await startApp({ demo: false, scheduler: false, dataDir: app.dataDir });
    const restored = await signedIn(app.baseUrl, 'lead@brinkwatch.test', DEMO_PASSWORD);
    const list = await (await restored.fetch('/api/series?limit=1000')).json();
    const restoredSlugs = list.items.map((s: { slug: string }) => s.slug).filter((s: string) => s.startsWith('backup-probe-'));
    expect(restoredSlugs.length).toBeGreaterThanOrEqual(atStart);
    expect(restoredSlugs.length).toBeLessThan(inCopy + 1);
  });
});
