import { AnalysisSnapshot, WITHOUT_CHARTS, db } from '@/models';
import { trendDirectionOf } from '@/lib/engine/direction';
import type { RuleFields } from '@/lib/schemas/rule';
import { fdrFamilyOutside, judgeRule, type Judgement, type RuleThresholds } from './evaluate';
import { snapshotTaus } from './evidence';
import { indicatorFacts, type StoredSummary } from './facts';
import { portfolioFdr } from './portfolio-fdr';
import { judgeabilityProblems } from './rules';
import { tauThreshold, tauWithDirection } from './wording';
import { indicatorLabel } from '@/lib/display/analysis-labels';
import { formatP, formatValue } from '@/lib/display/format';

/** How a rule reads against one analysis: it would pass, it would not, or a number it needs is missing. */
export type PreviewVerdict = 'passes' | 'fails' | 'cannot-judge';

/** What the rule editor shows under a draft: the verdict, one line per test, and what persistence adds. */
export interface RulePreview {
  verdict: PreviewVerdict;
  /** one sentence, e.g. "On the latest analysis this rule would pass: …" */
  headline: string;
  /** each configured test with the number it met or missed */
  checks: { test: string; observed: string; passed: boolean }[];
  /** when persistence > 1: a single pass does not open an alert */
  persistenceNote: string | null;
  judgement: Judgement;
}

/** The parts of a draft the preview reads: the judged thresholds and persistence. */
export type PreviewRule = RuleThresholds & { persistence: number };

/**
 * Judges a DRAFT rule on the latest analysis of its series with `judgeRule` (the very function live evaluation
 * uses, so the preview cannot disagree with what the scheduler would decide on the same snapshot) and words each
 * test with the number it met or missed. `qValue` is the draft's Benjamini–Hochberg q-value within the current
 * family when it sets a false-discovery level; `taus` as for `indicatorFacts`. Pure; O(1), or O(N) for N
 * surrogate taus.
 */
export function previewRule(rule: PreviewRule, summary: StoredSummary, qValue: number | null = null, taus: number[] | null = null): RulePreview {
  const judgement = judgeRule(rule, summary, qValue, taus);
  const name = indicatorLabel(rule.indicator);
  const checks: RulePreview['checks'] = [];
  if (!judgement.cannotJudge) {
    checks.push({
      test: tauThreshold(rule.minTau, rule.direction),
      observed: `τ ${tauWithDirection(judgement.tau, rule.direction)}`,
      passed: judgement.orientedTau! >= rule.minTau,
    });
    if (rule.maxSurrogateP !== null)
      checks.push({
        test: `surrogate p ≤ ${rule.maxSurrogateP}`,
        observed: `p ${formatP(judgement.surrogateP)}`,
        passed: judgement.surrogateP! <= rule.maxSurrogateP,
      });
    if (rule.fdrLevel !== null)
      checks.push({
        test: `q-value ≤ ${rule.fdrLevel} (all rules with a false-discovery level)`,
        observed: `q ${formatP(qValue)}`,
        passed: qValue !== null && qValue <= rule.fdrLevel,
      });
    if (rule.levelThreshold !== null) {
      const below = rule.levelDirection === 'below';
      checks.push({
        test: `latest ${name} ${below ? '≤' : '≥'} ${rule.levelThreshold}`,
        observed: `latest ${formatValue(judgement.level)}`,
        passed: below ? judgement.level! <= rule.levelThreshold : judgement.level! >= rule.levelThreshold,
      });
    }
  }
  const verdict: PreviewVerdict = judgement.cannotJudge ? 'cannot-judge' : judgement.passed ? 'passes' : 'fails';
  const headline =
    verdict === 'cannot-judge'
      ? `On the latest analysis this rule cannot be judged: ${judgement.cannotJudge}.`
      : verdict === 'passes'
        ? `On the latest analysis every test of this rule passes (${name}).`
        : `On the latest analysis this rule does not pass: ${judgement.failed.join('; ')}.`;
  const persistenceNote =
    rule.persistence > 1 ? `An alert opens only after ${rule.persistence} analyses in a row pass; this preview judges the latest one alone.` : null;
  return { verdict, headline, checks, persistenceNote, judgement };
}

/** A draft judged on its series' latest analysis, with the snapshot it was judged on (null: never analysed). */
export interface DraftPreview {
  snapshot: { id: number; createdAt: string; status: string; error: string | null } | null;
  preview: RulePreview | null;
  /** why saving the draft would be refused, by field (the same checks the save makes); empty when it would not */
  refused: Record<string, string[]>;
}

/**
 * What a draft rule says now: `previewRule` on the series' latest analysis. Surrogate taus are read only when the
 * draft looks another way than the stored p; with a false-discovery level the draft's p joins the current family
 * (every other active FDR rule's latest p; `replacing` leaves out the stored rule the draft edits) for its q-value.
 * A failed latest analysis is reported, not judged. With it, what a save would refuse (`judgeabilityProblems`).
 * A few indexed reads.
 */
export async function previewDraftRule(seriesId: number, draft: RuleFields, replacing: number | null): Promise<DraftPreview> {
  await db();
  const [snapshot, { fields: refused }] = await Promise.all([
    AnalysisSnapshot.findOne({ where: { seriesId }, order: [['id', 'DESC']], attributes: WITHOUT_CHARTS }),
    judgeabilityProblems(seriesId, draft),
  ]);
  if (!snapshot) return { snapshot: null, preview: null, refused };
  const header = { id: snapshot.id, createdAt: snapshot.createdAt.toISOString(), status: snapshot.status, error: snapshot.error };
  if (snapshot.status !== 'ok') return { snapshot: header, preview: null, refused };
  const summary = (snapshot.summary ?? {}) as StoredSummary;
  const direction = trendDirectionOf(draft.direction);
  const taus = indicatorFacts(summary, draft.indicator, direction).needsTaus ? await snapshotTaus(snapshot.id, draft.indicator) : null;
  let qValue: number | null = null;
  if (draft.fdrLevel !== null) {
    const own = indicatorFacts(summary, draft.indicator, direction, taus).surrogateP;
    const family = await fdrFamilyOutside(new Set(replacing === null ? [] : [replacing]));
    const decisions = portfolioFdr([...family, { ruleId: -1, seriesId, fdrLevel: draft.fdrLevel, surrogateP: own }]);
    qValue = decisions[decisions.length - 1].qValue;
  }
  return { snapshot: header, preview: previewRule(draft, summary, qValue, taus), refused };
}
