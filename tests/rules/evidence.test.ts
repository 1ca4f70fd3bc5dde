import { describe, expect, it } from 'vitest';
import { evidenceRows, reportIndicators } from '@/lib/series/evidence';
import type { RuleStatus } from '@/lib/alerts/rules';

const status = (id: number, indicator: string, standing: RuleStatus['standing'], active = true) =>
  ({
    rule: { id, indicator, active, severity: 'watch', minTau: 0.3, direction: 'rising', maxSurrogateP: 0.05 },
    standing,
    latest: null,
  }) as unknown as RuleStatus;

const view = {
  indicators: ['variance', 'ac1', 'recovery'] as const,
  kendall: {
    variance: { tau: 0.2, p: 0.1, direction: 'rising' as const },
    ac1: { tau: 0.6, p: 0.01, direction: 'rising' as const },
    recovery: { tau: -0.6, p: 0.01, direction: 'falling' as const },
  },
  significance: { ac1: { p: 0.02, count: 99, method: 'ar1', direction: 'rising' as const, bins: [] } },
};

describe('the evidence table', () => {
  it('lists every computed indicator once, the watched ones first, each with the rules it feeds', () => {
    const rows = evidenceRows({ ...view, indicators: [...view.indicators] }, [status(4, 'ac1', 'met'), status(5, 'ac1', 'not-met', false)]);
    expect(rows.map((r) => r.indicator)).toEqual(['ac1', 'variance', 'recovery']);
    expect(rows[0]).toMatchObject({ tau: 0.6, surrogateP: 0.02, surrogates: 99, direction: 'rising', computed: true });
    expect(rows[0].rules.map((r) => [r.id, r.standing, r.active])).toEqual([
      [4, 'met', true],
      [5, 'not-met', false],
    ]);
    expect(rows[2]).toMatchObject({ direction: 'falling', surrogateP: null, surrogates: 0, rules: [] });
  });

  it('keeps a rule on an indicator the analysis does not compute visible, marked as not computed', () => {
    const rows = evidenceRows({ ...view, indicators: [...view.indicators] }, [status(7, 'skewness', 'cannot-judge')]);
    expect(rows[0]).toMatchObject({ indicator: 'skewness', computed: false, tau: null });
  });

  it('without an analysis, shows the watched indicators only', () => {
    expect(evidenceRows(null, []).length).toBe(0);
    expect(evidenceRows(null, [status(1, 'variance', 'not-yet-judged')]).map((r) => r.indicator)).toEqual(['variance']);
  });
});

describe('what the one-page report charts', () => {
  const computed = ['variance', 'sd', 'ac1', 'recovery'] as const;
  it('the indicators the active rules watch, in the order the rules were written', () => {
    expect(
      reportIndicators(computed, [
        { indicator: 'recovery', active: true },
        { indicator: 'ac1', active: true },
        { indicator: 'sd', active: false },
      ]),
    ).toEqual(['recovery', 'ac1']);
  });
  it('paused rules when none is active; lag-1 autocorrelation and variance when there is no rule (common practice)', () => {
    expect(reportIndicators(computed, [{ indicator: 'sd', active: false }])).toEqual(['sd']);
    expect(reportIndicators(computed, [])).toEqual(['ac1', 'variance']);
  });
  it('the per-window indicators as any other, when rules watch them', () => {
    const all = ['variance', 'ac1', 'restoring-rate', 'spectral-ratio', 'ch', 'dfa', 'bimodality', 'potential-wells'] as const;
    const rules = all.slice(2).map((indicator) => ({ indicator, active: true }));
    expect(reportIndicators(all, rules)).toEqual(all.slice(2));
  });
  it('never an indicator the analysis does not compute', () => {
    expect(reportIndicators(['variance'], [{ indicator: 'kurtosis', active: true }])).toEqual(['variance']);
  });
});
