import { benjaminiHochberg } from '@/lib/engine/fdr';

/** One rule judged on one series in an analysis cycle. */
export interface PortfolioEntry {
  ruleId: number;
  seriesId: number;
  /** the rule's false-discovery level; null = the rule does not take part */
  fdrLevel: number | null;
  surrogateP: number | null;
}

export interface PortfolioDecision {
  ruleId: number;
  seriesId: number;
  /** Benjamini–Hochberg q-value within the cycle's family, null when the entry is not in it */
  qValue: number | null;
  /** q ≤ the rule's own fdrLevel (false when not in the family) */
  discovery: boolean;
}

/**
 * Portfolio false-discovery control for one analysis cycle: the surrogate p-values of every entry whose rule
 * has an fdrLevel form one family, adjusted together by Benjamini–Hochberg (lib/engine/fdr.ts); each entry is a
 * discovery when its q-value is at most its own rule's level (rejecting {q ≤ α} is the BH procedure at α, so
 * rules at different levels each get BH control at theirs). Entries without a surrogate p or without an
 * fdrLevel stay out of the family. Output is aligned with the input. Cost O(m log m).
 * Source: Benjamini & Hochberg (1995), J. R. Stat. Soc. B 57, 289–300.
 */
export function portfolioFdr(entries: readonly PortfolioEntry[]): PortfolioDecision[] {
  const members: number[] = [];
  entries.forEach((e, i) => {
    if (e.fdrLevel !== null && e.surrogateP !== null) members.push(i);
  });
  const { q } = benjaminiHochberg(members.map((i) => entries[i].surrogateP));
  const qOf = new Map<number, number>();
  members.forEach((i, k) => {
    if (Number.isFinite(q[k])) qOf.set(i, q[k]);
  });
  return entries.map((e, i) => {
    const qValue = qOf.get(i) ?? null;
    return { ruleId: e.ruleId, seriesId: e.seriesId, qValue, discovery: qValue !== null && e.fdrLevel !== null && qValue <= e.fdrLevel };
  });
}
