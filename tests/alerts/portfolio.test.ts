import fs from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateUp } from '@/migrations';
import { RuleEvaluation, db, type Series } from '@/models';
import { evaluateSnapshots } from '@/lib/alerts/evaluate';
import { makeRule, makeSeries, makeSnapshot, makeUser } from './helpers';

interface Fixture {
  cases: { name: string; p: number[]; q: number[] }[];
}
// Reference: scipy.stats.false_discovery_control(method='bh') (fixture written by tests/reference/bh_scipy.py);
// the case holds 40 Monte Carlo p-values (1 + k)/200, as surrogate tests give.
const fixture: Fixture = JSON.parse(fs.readFileSync(path.join(__dirname, '../../fixtures/reference/bh_scipy.json'), 'utf8'));
const { p, q } = fixture.cases.find((c) => c.name === 'monte-carlo-40')!;

beforeAll(async () => {
  await db();
  await migrateUp();
});

describe('portfolio false-discovery control across analysis cycles', () => {
  it('the family is every FDR rule with its latest p, also for series that received no data this cycle', async () => {
    const lead = await makeUser('lead');
    const series: Series[] = [];
    for (let i = 0; i < p.length; i++) {
      const s = await makeSeries();
      await makeRule(s, lead, { maxSurrogateP: null, fdrLevel: 0.05 });
      series.push(s);
    }
    const first = [];
    for (let i = 0; i < p.length; i++) first.push(await makeSnapshot(series[i], { tau: 0.5, surrogateP: p[i] }));
    await evaluateSnapshots(first);
    for (let i = 0; i < p.length; i++) {
      const e = (await RuleEvaluation.findOne({ where: { snapshotId: first[i].id } }))!;
      expect(Math.abs(e.qValue! - q[i])).toBeLessThanOrEqual(1e-12);
    }

    // Next cycle only three series have new data, with the same p as before: the other 37 stay in the family
    // with their latest p, so the q-values are scipy's for all 40 (a family of the three alone would give
    // q = min over their own step-up ratios instead, far smaller).
    const moved = [4, 11, 27];
    const second = await Promise.all(moved.map((i) => makeSnapshot(series[i], { tau: 0.5, surrogateP: p[i] })));
    await evaluateSnapshots(second);
    for (const [k, i] of moved.entries()) {
      const e = (await RuleEvaluation.findOne({ where: { snapshotId: second[k].id } }))!;
      expect(Math.abs(e.qValue! - q[i])).toBeLessThanOrEqual(1e-12);
    }

    // A series retired from monitoring leaves the family: with 39 members the q-values change.
    await series[0].update({ retiredAt: new Date() });
    const third = await makeSnapshot(series[4], { tau: 0.5, surrogateP: p[4] });
    await evaluateSnapshots([third]);
    const after = (await RuleEvaluation.findOne({ where: { snapshotId: third.id } }))!;
    // q of p[4] among the other 39: min over j ≥ rank of 39·p_(j)/j (Benjamini & Hochberg 1995, Sec. 3), by hand below.
    const rest = p.filter((_, i) => i !== 0).sort((a, b) => a - b);
    const rank = rest.indexOf(p[4]);
    let expected = Infinity;
    for (let j = rank; j < rest.length; j++) if (rest[j] >= p[4]) expected = Math.min(expected, (rest.length * rest[j]) / (j + 1));
    expect(after.qValue!).toBeCloseTo(Math.min(1, expected), 12);
  });
});
