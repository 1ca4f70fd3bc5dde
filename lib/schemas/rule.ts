import { z } from 'zod';
import { INDICATOR_NAMES } from '@/lib/engine/settings';

const probability = z.number().gt(0).max(1);

/**
 * The fields of an alert rule. Several indicators are watched with several rules (one per indicator), so each
 * alert names exactly the evidence that raised it. Thresholds left null are not tested.
 */
const ruleShape = {
  indicator: z.enum(INDICATOR_NAMES),
  /** Kendall tau of the indicator's trend must reach this (tau ∈ [−1, 1]). */
  minTau: z.number().min(-1).max(1),
  /** Share of surrogates whose tau reaches the observed tau must be at most this; needs surrogates in the series settings. */
  maxSurrogateP: probability.nullable(),
  maxKendallP: probability.nullable(),
  /** Optional test on the indicator's latest value, e.g. ac1 ≥ 0.9. */
  levelThreshold: z.number().finite().nullable(),
  levelDirection: z.enum(['above', 'below']),
  /** Consecutive passing evaluations needed before an alert opens. */
  persistence: z.number().int().min(1).max(100),
  severity: z.enum(['watch', 'warning']),
  /** After a dismissal, no new alert for this long unless the evidence is clearly stronger (see lib/alerts/evaluate.ts). */
  quietPeriodHours: z.number().min(0).max(24 * 366),
  /** Benjamini–Hochberg false-discovery level across all surrogate p-values of one analysis cycle. */
  fdrLevel: z.number().gt(0).max(0.5).nullable(),
  active: z.boolean(),
};

/** One schema per entity: creation fills defaults, updates take any subset. */
export const ruleCreateSchema = z
  .object({
    ...ruleShape,
    maxSurrogateP: ruleShape.maxSurrogateP.default(null),
    maxKendallP: ruleShape.maxKendallP.default(null),
    levelThreshold: ruleShape.levelThreshold.default(null),
    levelDirection: ruleShape.levelDirection.default('above'),
    persistence: ruleShape.persistence.default(1),
    severity: ruleShape.severity.default('watch'),
    quietPeriodHours: ruleShape.quietPeriodHours.default(0),
    fdrLevel: ruleShape.fdrLevel.default(null),
    active: ruleShape.active.default(true),
  })
  .strict();
export const ruleUpdateSchema = z.object(ruleShape).partial().strict();

export type RuleCreateInput = z.input<typeof ruleCreateSchema>;
export type RuleFields = z.output<typeof ruleCreateSchema>;
export type RuleUpdate = z.output<typeof ruleUpdateSchema>;
