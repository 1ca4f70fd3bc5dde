/**
 * Intake speed: a 1,000,000-row CSV taken in through a drop folder (targets < 30 s, peak RSS < 400 MB, measured in
 * a child process holding nothing else), and a range read of 100,000 points (target < 200 ms, median of 7).
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { BenchRow } from './index';

export const title = 'intake';

const ROWS = 1_000_000;
const FROM = Date.UTC(2000, 0, 1);

export async function run(): Promise<BenchRow[]> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-bench-intake-'));
  const folder = path.join(dataDir, 'drops', 'bench-series');
  fs.mkdirSync(folder, { recursive: true });
  const out = fs.createWriteStream(path.join(folder, 'million.csv'));
  out.write('time,value\n');
  for (let i = 0; i < ROWS; i += 10_000) {
    let chunk = '';
    for (let j = i; j < i + 10_000; j++) chunk += `${new Date(FROM + j * 60_000).toISOString()},${(Math.sin(j / 500) * 10).toFixed(4)}\n`;
    if (!out.write(chunk)) await new Promise<void>((r) => out.once('drain', () => r()));
  }
  await new Promise<void>((r) => out.end(() => r()));
  const sizeMb = fs.statSync(path.join(folder, 'million.csv')).size / 1024 / 1024;
  const child = spawnSync(process.execPath, ['--import', 'tsx', path.join(__dirname, 'intake-child.ts')], {
    env: { ...process.env, DATA_DIR: dataDir, DATABASE_PATH: '', BENCH_FROM: String(FROM) },
    encoding: 'utf8',
    maxBuffer: 16 * 1024 * 1024,
  });
  fs.rmSync(dataDir, { recursive: true, force: true });
  const line = child.stdout.split('\n').find((l) => l.startsWith('{'));
  if (child.status !== 0 || !line) throw new Error(`intake bench child failed:\n${child.stderr}`);
  const result = JSON.parse(line) as { results: { status: string }[]; intakeMs: number; maxRssMb: number; readMs: number; points: number };
  const stored = result.results[0]?.status === 'succeeded';
  return [
    {
      case: `drop-folder CSV (${sizeMb.toFixed(0)} MB) stored`,
      n: ROWS,
      value: result.intakeMs / 1000,
      unit: 's',
      target: '< 30 s',
      pass: stored && result.intakeMs < 30_000,
      note: stored ? '' : 'not stored',
    },
    { case: 'drop-folder CSV peak RSS', n: ROWS, value: result.maxRssMb, unit: 'MB', target: '< 400 MB', pass: result.maxRssMb < 400 },
    { case: 'range read', n: result.points, value: result.readMs, unit: 'ms', target: '< 200 ms', pass: result.points === 100_000 && result.readMs < 200 },
  ];
}
