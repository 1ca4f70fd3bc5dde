import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { expect, test } from 'vitest';

// ESLint over the whole tree with the framework's recommended and TypeScript rules (eslint.config.mjs), no warnings allowed.
test('the project passes the linter', () => {
  const root = path.resolve(__dirname, '..');
  const result = spawnSync(process.execPath, [path.join(root, 'node_modules/eslint/bin/eslint.js'), '.', '--max-warnings=0'], {
    cwd: root,
    encoding: 'utf8',
  });
  expect(result.stdout + result.stderr).toBe('');
  expect(result.status).toBe(0);
}, 300_000);
