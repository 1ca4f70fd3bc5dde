import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, statSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { brinkwatch } from '../support/cli';

const root = path.resolve(__dirname, '../..');
const dir = mkdtempSync(path.join(tmpdir(), 'bw-bin-'));
const file = path.join(dir, 'ar1.csv');
// An AR(1) record from a fixed linear-congruential stream (the values only need to be deterministic).
let state = 12345;
let x = 0;
const lines = ['t,value'];
for (let i = 0; i < 400; i++) {
  state = (state * 1103515245 + 12345) % 2147483648;
  x = 0.6 * x + (state / 2147483648 - 0.5);
  lines.push(`${i},${x.toFixed(6)}`);
}
writeFileSync(file, `${lines.join('\n')}\n`);

const viaBin = brinkwatch;
const viaSource = (args: string[]) =>
  spawnSync(path.join(root, 'node_modules/.bin/tsx'), [path.join(root, 'scripts/analyze.ts'), ...args], { cwd: root, encoding: 'utf8' });

// The packaged command (package.json "bin") must answer exactly as the source it is bundled from.
describe('brinkwatch command (bundled)', () => {
  it('prints the same summary as the source, surrogates in worker threads included', () => {
    // 120 surrogates: two worker threads on a two-core machine (surrogate-pool.ts), so the bundled worker runs too.
    const args = ['analyze', file, '--summary', '--surrogates', '120', '--seed', '7'];
    const bundled = viaBin(args);
    expect(bundled.status, bundled.stderr).toBe(0);
    const source = viaSource(args.slice(1));
    expect(source.status, source.stderr).toBe(0);
    expect(JSON.parse(bundled.stdout)).toEqual(JSON.parse(source.stdout));
  }, 120_000);

  it('rebuilds the bundle when a source it was built from changed', () => {
    expect(viaBin(['analyze', file, '--summary']).status).toBe(0);
    const manifest = path.join(root, 'dist/analyze.inputs.json');
    const before = JSON.parse(readFileSync(manifest, 'utf8')).builtAt as number;
    const source = path.join(root, 'lib/engine/kendall.ts');
    const { atime } = statSync(source);
    utimesSync(source, atime, new Date(Date.now() + 1000));
    expect(viaBin(['analyze', file, '--summary']).status).toBe(0);
    expect(JSON.parse(readFileSync(manifest, 'utf8')).builtAt).toBeGreaterThan(before);
  }, 120_000);

  it('answers an unknown command with its usage and exit code 2 (common practice)', () => {
    const r = viaBin(['analyse-everything']);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('usage: brinkwatch');
    expect(r.stdout).toBe('');
  });
});
