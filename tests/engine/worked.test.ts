import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { kendallCounts, kendallTau, mannKendall } from '@/lib/engine/kendall';

const load = (f: string) => JSON.parse(readFileSync(path.resolve(__dirname, '../../fixtures/worked', f), 'utf8'));
const f64 = (a: number[]) => Float64Array.from(a);

describe("Kendall's tau worked examples", () => {
  // Source: Hollander & Wolfe (1973), Nonparametric Statistical Methods, p. 187 (tuna quality), data and
  // p-values as printed in R's stats::cor.test documentation. `published` one-sided large-sample p = 0.04765
  // (the source's own number, 4 significant digits); tau and S are `computed` in the file (no ties: tau = S/36).
  it('Hollander & Wolfe p. 187: tau and the published one-sided normal-approximation p', () => {
    const d = load('kendall_tau_hollander_wolfe1973_p187.json');
    const r = kendallTau(f64(d.x), f64(d.y));
    expect(r.s).toBe(d.computed.S);
    expect(r.tau).toBeCloseTo(d.computed.tau_b, 14);
    expect(Math.abs(r.p / 2 - d.published.p_one_sided_normal_approx)).toBeLessThan(5e-6);
    // reference software: scipy kendalltau asymptotic, one-sided = half the two-sided p (no ties)
    expect(r.p / 2).toBeCloseTo(d.scipy.p_asymptotic_greater, 12);
  });

  // Source: Agresti (2002), Categorical Data Analysis, 2nd ed., Table 2.8 (job satisfaction by income).
  // `published`: concordant 1331 and discordant 849 pairs (recalled from the text, reproduced by
  // recomputation, per the file's provenance), gamma = 0.221. tau-b and its p are scipy's (`scipy`).
  it('Agresti Table 2.8: published concordant/discordant pairs and gamma; tau-b and p as scipy', () => {
    const d = load('kendall_taub_agresti2002_table2_8.json');
    const c = kendallCounts(f64(d.x_row_scores), f64(d.y_col_scores));
    expect(c.concordant).toBe(d.published.concordant);
    expect(c.discordant).toBe(d.published.discordant);
    expect(((c.concordant - c.discordant) / (c.concordant + c.discordant)).toFixed(3)).toBe(String(d.published.gamma));
    const r = kendallTau(f64(d.x_row_scores), f64(d.y_col_scores));
    expect(r.tau).toBeCloseTo(d.scipy.tau_b, 13);
    expect(Math.abs(r.p - d.scipy.pvalue_two_sided) / d.scipy.pvalue_two_sided).toBeLessThan(1e-9);
  });
});

describe('Mann–Kendall worked examples', () => {
  // Source: Little, College of the Holy Cross, "A Mann-Kendall Example (By Hand)": `published` S = 54,
  // Var(S) = 332.67 (one tie of two), Z = 2.9058 with continuity correction, one-sided p ≈ 0.0018.
  it('Holy Cross by-hand example: published S, Var(S), Z and p', () => {
    const d = load('mk_holycross_by_hand.json');
    const r = mannKendall(f64(d.data));
    expect(r.s).toBe(d.published.S);
    expect(r.varS).toBeCloseTo(d.published.varS, 10);
    expect(r.z).toBeCloseTo(d.published.Z, 4);
    expect(r.p / 2).toBeCloseTo(d.published.p_one_sided, 4);
  });

  // Source: Gilbert (1987), Statistical Methods for Environmental Pollution Monitoring, p. 212. The book's
  // Z = 3.1 (one decimal, `published`, as quoted by a third-party test suite); S and Var(S) are `computed`.
  it('Gilbert (1987) p. 212: the published Z to its one decimal; S and Var(S) as recomputed', () => {
    const d = load('mk_gilbert1987_p212.json');
    const r = mannKendall(f64(d.data));
    expect(r.s).toBe(d.computed.S);
    expect(r.varS).toBeCloseTo(d.computed.varS, 9);
    expect(Math.round(r.z * 10) / 10).toBe(d.published.Z);
    expect(r.z).toBeCloseTo(d.computed.Z_continuity_corrected, 12);
  });

  // Source: USEPA (2009) Unified Guidance, EPA 530/R-09-007, Examples 17-6 (sulfate) and 17-7 (sodium).
  // Compared with `reference_software` (EnvStats kendallTrendTest, continuity-corrected z; 7 significant
  // digits printed); the Guidance's own printed numbers were not consulted, per the files' provenance.
  for (const f of ['mk_epa2009_ex17_6_sulfate.json', 'mk_epa2009_ex17_7_sodium.json']) {
    it(`${f}: z and two-sided p as EnvStats`, () => {
      const d = load(f);
      const r = mannKendall(f64(d.data));
      expect(r.s).toBe(d.computed.S);
      expect(r.varS).toBe(d.computed.varS);
      expect(Math.abs(r.z - d.reference_software.EnvStats_z) / d.reference_software.EnvStats_z).toBeLessThan(1e-6);
      expect(Math.abs(r.p - d.reference_software.EnvStats_p_two_sided) / d.reference_software.EnvStats_p_two_sided).toBeLessThan(1e-6);
      expect(r.s / ((r.n * (r.n - 1)) / 2)).toBeCloseTo(d.reference_software.EnvStats_tau, 6);
      // tau-b as scipy.stats.kendalltau (file's `scipy`); the normal p without continuity correction as the
      // file's `computed` p_two_sided_nocc (scipy's own p for n = 10 without ties is its exact one)
      const k = kendallTau(null, f64(d.data));
      expect(k.tau).toBeCloseTo(d.scipy.scipy_kendalltau_tau_b, 13);
      expect(Math.abs(k.p - d.computed.p_two_sided_nocc) / d.computed.p_two_sided_nocc).toBeLessThan(1e-9);
    });
  }
});
