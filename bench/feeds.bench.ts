/**
 * Station feed speed: a 1,000,000-row file with four variables and their flag columns, dropped into a feed folder
 * and taken into four series whose QC tests (gross range, spike, flat line) run at intake (target < 60 s, measured
 * in a child process holding nothing else; its peak RSS is reported).
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { BenchRow } from './index';

export const title = 'feeds';

const ROWS = 1_000_000;
const FROM = Date.UTC(2000, 0, 1);

export async function run(): Promise<BenchRow[]> {
  const dataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'bw-bench-feeds-'));
  const folder = path.join(dataDir, 'drops', 'feeds', 'bench-station');
  fs.mkdirSync(folder, { recursive: true });
  const file = path.join(folder, 'station.csv');
  const out = fs.createWriteStream(file);
  out.write('time,temp,temp_qc,sal,sal_qc,do,do_qc,chl,chl_qc\n');
  for (let i = 0; i < ROWS; i += 10_000) {
    let chunk = '';
    for (let j = i; j < i + 10_000; j++) {
      const s = Math.sin(j / 500);
      chunk += `${new Date(FROM + j * 60_000).toISOString()},${(12 + s).toFixed(3)},1,${(34 + s / 10).toFixed(3)},1,${(8 - s).toFixed(3)},${j % 1000 === 0 ? 3 : 1},${(1 + s / 2).toFixed(3)},1\n`;
    }
    if (!out.write(chunk)) await new Promise<void>((r) => out.once('drain', () => r()));
  }
  await new Promise<void>((r) => out.end(() => r()));
  const sizeMb = fs.statSync(file).size / 1024 / 1024;
  const child = spawnSync(process.execPath, ['--import', 'tsx', path.join(__dirname, 'feeds-child.ts')], {
    env: { ...process.env, DATA_DIR: dataDir, DATABASE_PATH: '' },
    encoding: 'utf8',
    maxBuffer: 16 * 1024 * 1024,
  });
  fs.rmSync(dataDir, { recursive: true, force: true });
  const line = child.stdout.split('\n').find((l) => l.startsWith('{'));
  if (child.status !== 0 || !line) throw new Error(`feeds bench child failed:\n${child.stderr}`);
  const result = JSON.parse(line) as { results: { status: string }[]; intakeMs: number; maxRssMb: number };
  const stored = result.results[0]?.status === 'succeeded';
  return [
    {
      case: `feed file, 4 variables + flags (${sizeMb.toFixed(0)} MB), QC at intake`,
      n: ROWS,
      value: result.intakeMs / 1000,
      unit: 's',
      target: '< 60 s',
      pass: stored && result.intakeMs < 60_000,
      note: stored ? '' : 'not stored',
    },
    { case: 'feed file peak RSS', n: ROWS, value: result.maxRssMb, unit: 'MB', pass: null },
  ];
}
