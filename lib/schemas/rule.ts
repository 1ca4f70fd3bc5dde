import { z } from 'zod';
import { changeReasonSchema } from './change-reason';
import { INDICATOR_NAMES } from '@/lib/engine/settings';
import { RULE_DIRECTIONS, defaultRuleDirection } from '@/models/AlertRule';
import { SITE_INDICATORS } from '@/lib/engine/site';

const probability = z.number().gt(0).max(1);

/** Why a Kendall p gate is refused (README, "Alerts and mail"). */
const KENDALL_P_REFUSAL =
  'The Kendall p is no longer a gate: it assumes independent values, and indicator values from overlapping windows are not independent (on stationary records it falls below 0.05 most of the time). Use maxSurrogateP or fdrLevel, which test against surrogates of the series itself.';

/**
 * The fields of an alert rule. Several indicators are watched with several rules (one per indicator), so each
 * alert names exactly the evidence that raised it. Thresholds left null are not tested.
 */
const ruleShape = {
  indicator: z.enum(INDICATOR_NAMES),
  /**
   * Which way the trend must go: 'rising', 'falling' or 'either' (two-sided). Defaults to the indicator's own
   * direction under slowing down (recovery falls; skewness and kurtosis either way; the others rise).
   */
  direction: z.enum(RULE_DIRECTIONS),
  /** Kendall tau of the indicator's trend, seen in the rule's direction (−tau for 'falling', |tau| for 'either'), must reach this. */
  minTau: z.number().min(-1).max(1),
  /** Monte Carlo p of the trend against surrogates, in the rule's direction, must be at most this; needs surrogates in the series settings. */
  maxSurrogateP: probability.nullable(),
  /** Kept so old clients that send null still validate; any number is refused (see KENDALL_P_REFUSAL). */
  maxKendallP: z.null({ error: KENDALL_P_REFUSAL }),
  /** Optional test on the indicator's latest value, e.g. ac1 ≥ 0.9. */
  levelThreshold: z.number().finite().nullable(),
  levelDirection: z.enum(['above', 'below']),
  /** Consecutive passing evaluations needed before an alert opens. */
  persistence: z.number().int().min(1).max(100),
  severity: z.enum(['watch', 'warning']),
  /** After a dismissal, no new alert for this long unless the evidence is clearly stronger (see lib/alerts/evaluate.ts). */
  quietPeriodHours: z
    .number()
    .min(0)
    .max(24 * 366),
  /** Benjamini–Hochberg false-discovery level across the latest surrogate p of every rule that sets one (every series). */
  fdrLevel: z.number().gt(0).max(0.5).nullable(),
  active: z.boolean(),
};

/** The defaults creation fills in, shared by series and site rules. */
const creationDefaults = {
  maxSurrogateP: ruleShape.maxSurrogateP.default(null),
  maxKendallP: ruleShape.maxKendallP.default(null),
  levelThreshold: ruleShape.levelThreshold.default(null),
  levelDirection: ruleShape.levelDirection.default('above'),
  persistence: ruleShape.persistence.default(1),
  severity: ruleShape.severity.default('watch'),
  quietPeriodHours: ruleShape.quietPeriodHours.default(0),
  active: ruleShape.active.default(true),
  /** why the rule is added; kept in its audit entry */
  reason: changeReasonSchema.optional(),
};

/** One schema per entity: creation fills defaults (direction from the indicator), updates take any subset. */
export const ruleCreateSchema = z
  .object({ ...ruleShape, ...creationDefaults, direction: ruleShape.direction.optional(), fdrLevel: ruleShape.fdrLevel.default(null) })
  .strict()
  .transform((rule) => ({ ...rule, direction: rule.direction ?? defaultRuleDirection(rule.indicator) }));
/** `reason`: why the rule changed, kept in its audit entry and shown in period reports. */
export const ruleUpdateSchema = z
  .object({ ...ruleShape, reason: changeReasonSchema })
  .partial()
  .strict();

/** Body of PATCH /api/rules/{id}: an object, checked field by field by ruleUpdateSchema or siteRuleUpdateSchema once the rule is known. */
export const ruleChangesBodySchema = z.record(z.string(), z.unknown());

export type RuleCreateInput = z.input<typeof ruleCreateSchema>;
export type RuleFields = z.output<typeof ruleCreateSchema>;
export type RuleUpdate = z.output<typeof ruleUpdateSchema>;

/**
 * Body of POST /api/series/{slug}/rules/preview: a draft rule (validated as a new rule is) and, when the draft edits
 * a stored rule, that rule's id (it leaves the false-discovery family so the draft takes its place).
 */
export const rulePreviewSchema = z.object({ rule: ruleCreateSchema, replacing: z.number().int().positive().nullable().default(null) }).strict();

const SITE_INDICATOR_NAMES = SITE_INDICATORS.map((d) => d.name) as [(typeof SITE_INDICATORS)[number]['name'], ...(typeof SITE_INDICATORS)[number]['name'][]];

/**
 * A rule on a site's site-level indicators (lib/alerts/site-rules.ts). The same thresholds as a series rule, with
 * two limits: the site snapshot keeps the surrogate p only in the indicators' own direction (all rise under slowing
 * down), so a site rule looks that way; and false-discovery control spans the series rules' family, so a site rule
 * is judged on its own surrogate p.
 */
const siteRuleShape = {
  ...ruleShape,
  indicator: z.enum(SITE_INDICATOR_NAMES),
  direction: z.literal('rising', { error: 'A site rule looks for a rising trend: every site-level indicator rises under slowing down.' }),
  fdrLevel: z.null({ error: 'False-discovery control spans the series rules; a site rule is judged on its own surrogate p (maxSurrogateP).' }),
};

export const siteRuleCreateSchema = z
  .object({ ...siteRuleShape, ...creationDefaults, direction: siteRuleShape.direction.default('rising'), fdrLevel: siteRuleShape.fdrLevel.default(null) })
  .strict();
export const siteRuleUpdateSchema = z
  .object({ ...siteRuleShape, reason: changeReasonSchema })
  .partial()
  .strict();
export type SiteRuleCreateInput = z.input<typeof siteRuleCreateSchema>;
