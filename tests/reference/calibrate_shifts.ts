/**
 * Calibrates the shift detector's threshold constants (SHIFT_THRESHOLD_CONSTANTS in lib/engine/shifts.ts).
 * For every null record (tests/engine/shift-nulls.ts: stationary AR(1) with φ ∈ {0, 0.5, 0.8, 0.9, 0.95}, the two
 * slowing-down nulls and the two fold approaches, at n ∈ {200, 1000, 5000}) it computes the scan's largest
 * standardised jump M = max_t T_t (shiftScan) and its normalised value c* = a(n/G)·M − b(n/G) (scanNormalisation):
 * the detector reports a shift on the record exactly when c* > c. A constant c then gives a cell the false-positive
 * rate #{c* > c}/R, and c(α) is the largest (1 − α) quantile of c* over all cells, rounded up to 0.05, so every cell
 * stays at or below α in this sample. Seeds 7000 + family index, stream n·10,000 + record.
 * Run from the repo root (about a minute on one core):
 *   node --import tsx tests/reference/calibrate_shifts.ts
 * Writes fixtures/reference/shift_calibration.json.
 */
import { writeFileSync } from 'node:fs';
import { DEFAULT_MIN_SEGMENT, scanNormalisation, shiftScan } from '../../lib/engine/shifts';
import { FOLD_APPROACHES, SLOWING_DOWN, nullFamily, stationary } from '../engine/shift-nulls';

const RECORDS: Record<number, number> = { 200: 4000, 1000: 2000, 5000: 1000 };
const RATES = [0.01, 0.05, 0.1];
const FAMILIES = [0, 0.5, 0.8, 0.9, 0.95].map(stationary).concat(SLOWING_DOWN).map(nullFamily).concat(FOLD_APPROACHES);

function normalisedMaximum(x: Float64Array): number {
  const { bandwidth, statistic } = shiftScan(x, DEFAULT_MIN_SEGMENT);
  let max = 0;
  for (const t of statistic) if (t > max) max = t;
  const { a, b } = scanNormalisation(x.length / bandwidth);
  return a * max - b;
}

interface Cell { n: number; family: string; records: number; values: number[] }
const cells: Cell[] = [];
for (const n of Object.keys(RECORDS).map(Number)) {
  FAMILIES.forEach((family, f) => {
    const values: number[] = [];
    for (let r = 0; r < RECORDS[n]; r++) values.push(normalisedMaximum(family.simulate(n, 7000 + f, n * 10000 + r)));
    values.sort((p, q) => p - q);
    cells.push({ n, family: family.name, records: RECORDS[n], values });
  });
}
// Upper (1 − α) quantile: the smallest c exceeded by at most ⌊αR⌋ of the cell's values.
const quantile = (v: number[], rate: number) => v[v.length - 1 - Math.floor(rate * v.length)];
const constants = RATES.map((rate) => ({ rate, constant: Math.ceil(20 * Math.max(...cells.map((c) => quantile(c.values, rate)))) / 20 }));
const table = cells.map((c) => ({
  n: c.n,
  family: c.family,
  records: c.records,
  quantiles: Object.fromEntries(RATES.map((rate) => [rate, Math.round(1000 * quantile(c.values, rate)) / 1000])),
  falsePositives: Object.fromEntries(constants.map(({ rate, constant }) => [rate, c.values.filter((v) => v > constant).length])),
}));
console.log(JSON.stringify(constants));
console.table(table.map((r) => ({ n: r.n, family: r.family, R: r.records, q99: r.quantiles[0.01], q95: r.quantiles[0.05], q90: r.quantiles[0.1], ...r.falsePositives })));
writeFileSync('fixtures/reference/shift_calibration.json', JSON.stringify({ method: 'tests/reference/calibrate_shifts.ts', minSegment: DEFAULT_MIN_SEGMENT, constants, cells: table }, null, 1) + '\n');
