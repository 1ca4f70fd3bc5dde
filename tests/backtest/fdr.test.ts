import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { benjaminiHochberg } from '@/lib/engine/fdr';

interface Fixture {
  versions: Record<string, string>;
  cases: { name: string; p: number[]; q: number[] }[];
}

const fixture: Fixture = JSON.parse(fs.readFileSync(path.join(__dirname, '../../fixtures/reference/bh_scipy.json'), 'utf8'));

describe('Benjamini–Hochberg q-values', () => {
  // Reference: scipy.stats.false_discovery_control(method='bh'), versions recorded in the fixture
  // (written by tests/reference/bh_scipy.py).
  it.each(fixture.cases.map((c) => [c.name, c] as const))('matches scipy on %s', (_name, c) => {
    const { q, m } = benjaminiHochberg(c.p, 0.05);
    expect(m).toBe(c.p.length);
    for (let i = 0; i < c.p.length; i++) expect(Math.abs(q[i] - c.q[i])).toBeLessThanOrEqual(1e-15 * Math.max(1, c.q[i]));
  });

  it('rejects exactly those with q ≤ level, the step-up set', () => {
    for (const c of fixture.cases) {
      for (const level of [0.01, 0.05, 0.2]) {
        const r = benjaminiHochberg(c.p, level);
        // Step-up definition (Benjamini & Hochberg 1995, Sec. 3): k = max{i : p_(i) ≤ i·level/m}.
        const sorted = [...c.p].sort((a, b) => a - b);
        let k = 0;
        sorted.forEach((p, i) => {
          if (p <= ((i + 1) * level) / sorted.length) k = i + 1;
        });
        expect(r.rejections).toBe(k);
        c.p.forEach((p, i) => expect(r.rejected[i]).toBe(c.q[i] <= level));
      }
    }
  });

  it('reproduces the worked example of Benjamini & Hochberg (1995)', () => {
    // The 15 p-values of the paper's example (a multiple-end-point clinical study), as recalled from
    // memory: at q = 0.05 the step-up procedure rejects the four smallest, where Bonferroni (0.05/15)
    // rejects only three.
    const p = [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.324, 0.4262, 0.5719, 0.6528, 0.759, 1.0];
    const r = benjaminiHochberg(p, 0.05);
    expect(r.rejections).toBe(4);
    expect(r.rejected.slice(0, 4)).toEqual([true, true, true, true]);
    expect(r.rejected.slice(4).some(Boolean)).toBe(false);
    expect(p.filter((v) => v <= 0.05 / 15).length).toBe(3);
    // q_(4) = min over j ≥ 4 of 15·p_(j)/j = 15·0.0095/4 = 0.035625 (arithmetic on the printed values).
    expect(r.q[3]).toBeCloseTo(0.035625, 12);
    // q_(5) = min(15·0.0201/5, 15·0.0278/6, …, 15·0.0459/9, …) = 15·0.0201/5 = 0.0603 > 0.05, so not rejected.
    expect(r.q[4]).toBeCloseTo(0.0603, 12);
  });

  it('leaves missing p-values out of the family', () => {
    const r = benjaminiHochberg([0.01, null, Number.NaN, 0.04], 0.05);
    expect(r.m).toBe(2);
    expect(Number.isNaN(r.q[1]) && Number.isNaN(r.q[2])).toBe(true);
    expect(r.q[0]).toBeCloseTo(0.02, 15);
    expect(r.q[3]).toBeCloseTo(0.04, 15);
  });
});
