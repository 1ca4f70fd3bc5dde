/**
 * Calibrates the shift detector's threshold constants (SHIFT_THRESHOLD_CONSTANTS in lib/engine/shifts.ts).
 * For every null record (tests/engine/shift-nulls.ts: stationary AR(1) with φ ∈ {0, 0.5, 0.8, 0.9, 0.95}, the two
 * slowing-down nulls and the two fold approaches, at n ∈ {200, 1000, 5000}) it computes the scan (shiftScan) and
 * two numbers: the normalised interior maximum c* = a(n/G)·max T_t − b(n/G) over grid points before the end zone
 * (scanNormalisation), and the end zone's largest T_t, e*. The detector reports a shift on the record exactly when
 * c* > c_interior or e* > c_end. c_interior(α) is the largest upper (1 − END_SHARE)·α quantile of c* over all
 * cells and c_end(α) the largest upper END_SHARE·α quantile of e*, each rounded up to 0.05, so every cell stays at
 * or below α in this sample (Bonferroni); the table also counts each cell's records with either exceeded.
 * Seeds 7000 + family index, stream n·10,000 + record.
 * Run from the repo root (about a minute on one core):
 *   node --import tsx tests/reference/calibrate_shifts.ts
 * Writes fixtures/reference/shift_calibration.json.
 */
import { writeFileSync } from 'node:fs';
import { DEFAULT_MIN_SEGMENT, END_SHARE, scanNormalisation, shiftScan } from '../../lib/engine/shifts';
import { FOLD_APPROACHES, SLOWING_DOWN, nullFamily, stationary } from '../engine/shift-nulls';

const RECORDS: Record<number, number> = { 200: 6000, 1000: 3000, 5000: 1000 };
const RATES = [0.01, 0.05, 0.1];
const FAMILIES = [0, 0.5, 0.8, 0.9, 0.95].map(stationary).concat(SLOWING_DOWN).map(nullFamily).concat(FOLD_APPROACHES);

function maxima(x: Float64Array): { interior: number; end: number } {
  const { bandwidth, endZone, statistic } = shiftScan(x, DEFAULT_MIN_SEGMENT);
  let interior = 0;
  let end = 0;
  statistic.forEach((T, t) => {
    if (!(T >= 0)) return;
    if (t < endZone) interior = Math.max(interior, T);
    else end = Math.max(end, T);
  });
  const { a, b } = scanNormalisation(x.length / bandwidth);
  return { interior: a * interior - b, end };
}

interface Cell {
  n: number;
  family: string;
  records: number;
  interior: number[];
  end: number[];
}
const cells: Cell[] = [];
for (const n of Object.keys(RECORDS).map(Number)) {
  FAMILIES.forEach((family, f) => {
    const interior: number[] = [];
    const end: number[] = [];
    for (let r = 0; r < RECORDS[n]; r++) {
      const m = maxima(family.simulate(n, 7000 + f, n * 10000 + r));
      interior.push(m.interior);
      end.push(m.end);
    }
    cells.push({ n, family: family.name, records: RECORDS[n], interior, end });
  });
}
// Upper quantile at share p: the smallest value exceeded by at most ⌊pR⌋ of the cell's values.
const quantile = (v: number[], p: number) => [...v].sort((a, b) => a - b)[v.length - 1 - Math.floor(p * v.length)];
const up = (v: number) => Math.ceil(20 * v) / 20;
const constants = RATES.map((rate) => ({
  rate,
  interior: up(Math.max(...cells.map((c) => quantile(c.interior, (1 - END_SHARE) * rate)))),
  end: up(Math.max(...cells.map((c) => quantile(c.end, END_SHARE * rate)))),
}));
const table = cells.map((c) => ({
  n: c.n,
  family: c.family,
  records: c.records,
  falsePositives: Object.fromEntries(constants.map(({ rate, interior, end }) => [rate, c.interior.filter((v, r) => v > interior || c.end[r] > end).length])),
}));
console.log(JSON.stringify(constants));
console.table(table.map((r) => ({ n: r.n, family: r.family, R: r.records, ...r.falsePositives })));
writeFileSync(
  'fixtures/reference/shift_calibration.json',
  JSON.stringify({ method: 'tests/reference/calibrate_shifts.ts', minSegment: DEFAULT_MIN_SEGMENT, endShare: END_SHARE, constants, cells: table }, null, 1) +
    '\n',
);
