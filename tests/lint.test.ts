import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { expect, test } from 'vitest';

const root = path.resolve(__dirname, '..');
const run = (script: string, args: string[]) => spawnSync(process.execPath, [path.join(root, script), ...args], { cwd: root, encoding: 'utf8' });

// ESLint over the whole tree with the framework's recommended and TypeScript rules (eslint.config.mjs), no warnings allowed.
test('the project passes the linter', () => {
  const result = run('node_modules/eslint/bin/eslint.js', ['.', '--max-warnings=0']);
  expect(result.stdout + result.stderr).toBe('');
  expect(result.status).toBe(0);
}, 300_000);

// Prettier (.prettierrc.json, .prettierignore): every source file is as `npm run format` leaves it.
test('the sources are formatted', () => {
  const result = run('node_modules/prettier/bin/prettier.cjs', ['--list-different', '.']);
  expect(result.stdout, 'run npm run format').toBe('');
  expect(result.status).toBe(0);
}, 300_000);
