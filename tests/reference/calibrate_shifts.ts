/**
 * Calibrates the shift detector's penalty constants (SHIFT_PENALTY_CONSTANTS in lib/engine/shifts.ts).
 * For every null record (tests/engine/shift-nulls.ts: stationary AR(1) with φ ∈ {0, 0.5, 0.8, 0.9, 0.95} and
 * the two slowing-down nulls, at n ∈ {200, 1000, 5000}) it finds by bisection the smallest penalty constant
 * c* at which the detector reports no shift (the number of shifts of an optimal partition never grows with
 * the penalty). A constant c then gives that cell a false-positive rate of #{c* > c}/R; c(α) is the largest
 * (1 − α) quantile of c* over all cells, so every cell stays at or below α in this sample. Seeds 7000 + cell.
 * Run once from the repo root (about ten minutes for n = 200 and 1000, as long for 5000, on one core), e.g. in two shells:
 *   node --import tsx tests/reference/calibrate_shifts.ts 200,1000
 *   node --import tsx tests/reference/calibrate_shifts.ts 5000
 * then merge: node --import tsx tests/reference/calibrate_shifts.ts merge
 * Writes fixtures/reference/shift_calibration*.json.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { RandomStream } from '../../lib/engine/random';
import { DEFAULT_MIN_SEGMENT, shiftsWithPenalty } from '../../lib/engine/shifts';
import { SLOWING_DOWN, simulateNull, stationary } from '../engine/shift-nulls';

const RECORDS: Record<number, number> = { 200: 500, 1000: 200, 5000: 70 };
const RATES = [0.01, 0.05, 0.1];
const KINDS = [0, 0.5, 0.8, 0.9, 0.95].map(stationary).concat(SLOWING_DOWN);

function threshold(x: Float64Array): number {
  const any = (c: number) => shiftsWithPenalty(x, c, DEFAULT_MIN_SEGMENT).length > 0;
  let lo = 0;
  let hi = 8;
  while (any(hi)) {
    lo = hi;
    hi *= 2;
  }
  for (let k = 0; k < 8; k++) {
    const mid = (lo + hi) / 2;
    if (any(mid)) lo = mid;
    else hi = mid;
  }
  return hi;
}

interface Cell { n: number; kind: string; records: number; thresholds: number[] }

const arg = process.argv[2] ?? '200,1000,5000';
if (arg !== 'merge') {
  const cells: Cell[] = [];
  for (const n of arg.split(',').map(Number)) {
    KINDS.forEach((kind, k) => {
      const thresholds: number[] = [];
      for (let r = 0; r < RECORDS[n]; r++) thresholds.push(threshold(simulateNull(kind, n, new RandomStream(7000 + k, n * 10000 + r))));
      thresholds.sort((a, b) => a - b);
      cells.push({ n, kind: kind.name, records: RECORDS[n], thresholds });
      console.log(n, kind.name, 'q99', thresholds[Math.floor(0.99 * thresholds.length)].toFixed(3));
    });
  }
  writeFileSync(`fixtures/reference/shift_calibration_${arg.replace(/,/g, '_')}.json`, JSON.stringify({ cells }));
} else {
  const cells: Cell[] = ['200_1000', '5000'].flatMap((p) => JSON.parse(readFileSync(`fixtures/reference/shift_calibration_${p}.json`, 'utf8')).cells);
  // Upper (1 − α) quantile: the smallest c exceeded by at most ⌊αR⌋ thresholds.
  const quantile = (t: number[], rate: number) => t[t.length - 1 - Math.floor(rate * t.length)];
  const constants = RATES.map((rate) => ({ rate, constant: Math.ceil(100 * Math.max(...cells.map((c) => quantile(c.thresholds, rate)))) / 100 }));
  const table = cells.map((c) => ({
    n: c.n,
    kind: c.kind,
    records: c.records,
    falsePositives: Object.fromEntries(constants.map(({ rate, constant }) => [rate, c.thresholds.filter((t) => t > constant).length])),
  }));
  console.log(JSON.stringify(constants));
  console.table(table.map((r) => ({ n: r.n, kind: r.kind, R: r.records, ...r.falsePositives })));
  writeFileSync('fixtures/reference/shift_calibration.json', JSON.stringify({ method: 'tests/reference/calibrate_shifts.ts', minSegment: DEFAULT_MIN_SEGMENT, constants, cells: table }, null, 1));
}
