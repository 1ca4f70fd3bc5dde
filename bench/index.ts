/**
 * `npm run bench` — runs every bench/*.bench.ts (or the ones named: `npm run bench -- engine`) and prints
 * one table. A bench module exports `title` and `run(): Promise<BenchRow[]>`; add a file to add a bench.
 * Exit code 1 when a row with a target misses it.
 */
import { readdirSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';

export interface BenchRow {
  /** what was measured, e.g. "gaussian detrend (bandwidth 0.1)" */
  case: string;
  /** problem size, e.g. 1e6 */
  n?: number | string;
  value: number;
  unit: string;
  /** human-readable target, e.g. "< 1000 ms" */
  target?: string;
  /** null = informational */
  pass?: boolean | null;
  note?: string;
}

export interface BenchModule {
  title: string;
  run(): Promise<BenchRow[]>;
}

function fmt(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  if (Math.abs(v) >= 100) return v.toFixed(0);
  if (Math.abs(v) >= 10) return v.toFixed(1);
  return v.toFixed(2);
}

function printTable(rows: (BenchRow & { suite: string })[]): void {
  const head = ['suite', 'case', 'n', 'value', 'unit', 'target', 'result', 'note'];
  const body = rows.map((r) => [
    r.suite,
    r.case,
    r.n === undefined ? '' : typeof r.n === 'number' ? r.n.toExponential(0).replace('e+', 'e') : r.n,
    fmt(r.value),
    r.unit,
    r.target ?? '',
    r.pass === undefined || r.pass === null ? '' : r.pass ? 'pass' : 'FAIL',
    r.note ?? '',
  ]);
  const widths = head.map((h, i) => Math.max(h.length, ...body.map((b) => b[i].length)));
  const line = (cells: string[]) =>
    cells
      .map((c, i) => (i === 3 ? c.padStart(widths[i]) : c.padEnd(widths[i])))
      .join('  ')
      .trimEnd();
  console.log(line(head));
  console.log(widths.map((w) => '-'.repeat(w)).join('  '));
  for (const b of body) console.log(line(b));
}

async function main(): Promise<number> {
  const wanted = process.argv.slice(2);
  const files = readdirSync(__dirname)
    .filter((f) => f.endsWith('.bench.ts'))
    .filter((f) => wanted.length === 0 || wanted.includes(f.replace(/\.bench\.ts$/, '')))
    .sort();
  if (files.length === 0) {
    console.error(`no bench files match ${wanted.join(', ') || 'bench/*.bench.ts'}`);
    return 1;
  }
  const rows: (BenchRow & { suite: string })[] = [];
  for (const f of files) {
    const mod = (await import(path.join(__dirname, f))) as BenchModule;
    console.error(`running ${f} (${mod.title}) ...`);
    for (const r of await mod.run()) rows.push({ ...r, suite: mod.title });
  }
  printTable(rows);
  const failed = rows.filter((r) => r.pass === false).length;
  const judged = rows.filter((r) => r.pass === true || r.pass === false).length;
  console.log(`\n${judged - failed} of ${judged} targets met (machine: ${os.cpus().length} cores, Node ${process.version})`);
  return failed > 0 ? 1 : 0;
}

main().then(
  (code) => {
    process.exitCode = code;
  },
  (e) => {
    console.error(e);
    process.exitCode = 1;
  },
);
