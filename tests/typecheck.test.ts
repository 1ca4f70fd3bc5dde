import { spawnSync } from 'node:child_process';
import path from 'node:path';
import { expect, test } from 'vitest';

// TypeScript strict over the whole tree (the production build skips its own check and relies on this one).
test('the project type-checks under strict TypeScript', () => {
  const root = path.resolve(__dirname, '..');
  const result = spawnSync(process.execPath, [path.join(root, 'node_modules/typescript/bin/tsc'), '--noEmit', '-p', root], {
    cwd: root,
    encoding: 'utf8',
  });
  expect(result.stdout + result.stderr).toBe('');
  expect(result.status).toBe(0);
}, 300_000);
