import { describe, expect, it } from 'vitest';
import { portfolioFdr } from '@/lib/alerts/portfolio-fdr';

describe('portfolio false-discovery control', () => {
  it('adjusts the FDR-enabled surrogate p-values of one cycle together and decides at each rule’s level', () => {
    const entries = [
      { ruleId: 1, seriesId: 10, fdrLevel: 0.05, surrogateP: 0.01 },
      { ruleId: 2, seriesId: 11, fdrLevel: 0.05, surrogateP: 0.04 },
      { ruleId: 3, seriesId: 12, fdrLevel: null, surrogateP: 0.001 },
      { ruleId: 4, seriesId: 13, fdrLevel: 0.1, surrogateP: 0.03 },
      { ruleId: 5, seriesId: 14, fdrLevel: 0.05, surrogateP: null },
    ];
    const out = portfolioFdr(entries);
    // family {0.01, 0.04, 0.03} (m = 3): q = 3·0.01/1 = 0.03; q(0.03) = min(3·0.03/2, 3·0.04/3) = 0.04; q(0.04) = 0.04
    // (Benjamini & Hochberg 1995 step-up adjustment, by hand)
    expect(out.map((d) => d.qValue)).toEqual([0.03, 0.04, null, 0.04, null].map((v) => (v === null ? null : expect.closeTo(v, 14))));
    expect(out.map((d) => d.discovery)).toEqual([true, true, false, true, false]);
    expect(out.map((d) => d.ruleId)).toEqual([1, 2, 3, 4, 5]);
  });

  it('a weak p-value among many nulls is not a discovery although it passes alone', () => {
    const entries = Array.from({ length: 40 }, (_, i) => ({ ruleId: i, seriesId: i, fdrLevel: 0.05, surrogateP: i === 0 ? 0.02 : 0.2 + i / 100 }));
    const out = portfolioFdr(entries);
    // q_(1) = min_j 40·p_(j)/j; for j ≥ 2, 40·(0.19 + j/100)/j falls with j, so the minimum is at j = 40: 0.59
    expect(out[0].qValue!).toBeCloseTo(0.59, 12);
    expect(out[0].discovery).toBe(false);
  });
});
