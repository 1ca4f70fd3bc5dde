import type { AnalysisView } from '@/lib/analysis/view';
import type { RuleStanding, RuleStatus } from '@/lib/alerts/rules';
import type { TrendDirection } from '@/lib/engine/direction';
import type { IndicatorName } from '@/lib/engine/settings';

/** One row of the series page's evidence table: an indicator, its trend in the direction it is read in, and the rules it feeds. */
export interface EvidenceRow {
  indicator: IndicatorName;
  /** the direction slowing down would move it (the one its tau and surrogate p are read in) */
  direction: TrendDirection;
  tau: number | null;
  surrogateP: number | null;
  /** surrogates behind the p; 0 when the series runs none */
  surrogates: number;
  /** points the record gained since its surrogates were drawn (an incremental analysis keeps them; 0: drawn on this record) */
  surrogatesDrawnBefore: number;
  computed: boolean;
  rules: { id: number; active: boolean; severity: string; standing: RuleStanding; outcome: string | null; rule: RuleStatus['rule'] }[];
}

/**
 * The evidence table of a series, from its saved analysis and its rules' latest judgements: every computed
 * indicator, plus any indicator a rule watches that the analysis does not compute (so that rule is not hidden),
 * ordered with the watched indicators first. Pure; O(indicators × rules).
 */
export function evidenceRows(view: Pick<AnalysisView, 'indicators' | 'kendall' | 'significance'> | null, statuses: RuleStatus[]): EvidenceRow[] {
  const computed = view?.indicators ?? [];
  const watched = statuses.map((s) => s.rule.indicator as IndicatorName);
  const names = [...new Set([...computed, ...watched])];
  const rows = names.map((indicator): EvidenceRow => {
    const kendall = view?.kendall[indicator];
    const significance = view?.significance[indicator];
    return {
      indicator,
      direction: significance?.direction ?? kendall?.direction ?? 'rising',
      tau: kendall?.tau ?? null,
      surrogateP: significance?.p ?? null,
      surrogates: significance?.count ?? 0,
      surrogatesDrawnBefore: significance?.pointsSinceDrawn ?? 0,
      computed: computed.includes(indicator),
      rules: statuses
        .filter((s) => s.rule.indicator === indicator)
        .map((s) => ({
          id: s.rule.id,
          active: s.rule.active,
          severity: s.rule.severity,
          standing: s.standing,
          outcome: s.latest?.outcome ?? null,
          rule: s.rule,
        })),
    };
  });
  return rows.sort((a, b) => Number(b.rules.length > 0) - Number(a.rules.length > 0));
}

/** What a report charts when the series has no rule: the two indicators most early-warning work reads first (common practice). */
const REPORT_FALLBACK: IndicatorName[] = ['ac1', 'variance'];

/**
 * The indicators the one-page report charts: those the series' active rules watch (paused ones too when none is
 * active), in the order the rules were written; without rules, lag-1 autocorrelation and variance. Only computed
 * indicators are charted. Pure.
 */
export function reportIndicators(computed: readonly IndicatorName[], rules: { indicator: string; active: boolean }[]): IndicatorName[] {
  const active = rules.filter((r) => r.active);
  const watched = [...new Set((active.length ? active : rules).map((r) => r.indicator as IndicatorName))];
  const chosen = (watched.length ? watched : REPORT_FALLBACK).filter((name) => computed.includes(name));
  return chosen.length ? chosen : REPORT_FALLBACK.filter((name) => computed.includes(name));
}
