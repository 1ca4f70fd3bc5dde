import { Op, QueryTypes, type Transaction } from 'sequelize';
import { Alert, AlertRule, AnalysisSnapshot, BacktestJob, RuleEvaluation, Series, SiteRuleEvaluation, db, writeTransaction } from '@/models';
import { NotFoundError, UnprocessableError } from '@/lib/http/errors';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { latestRuleCalibration, queueRuleCalibration, type RuleCalibration } from '@/lib/backtest/jobs';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import type { RuleDirection } from '@/lib/engine/direction';
import { indicatorLabel } from '@/lib/display/analysis-labels';
import { ruleCreateSchema, ruleUpdateSchema, siteRuleUpdateSchema, type RuleCreateInput, type RuleFields, type RuleUpdate } from '@/lib/schemas/rule';

/** What presentRule adds beyond the stored fields. */
export interface RuleContext {
  /** latest finished calibration of the rule (false alarms per year of the live procedure on surrogates); null = not yet */
  calibration?: RuleCalibration | null;
  /** what the rule can and cannot do on its series, in words (e.g. the false-discovery floor) */
  warnings?: string[];
}

/** The public shape of a rule. */
export function presentRule(rule: AlertRule, context: RuleContext = {}) {
  return {
    id: rule.id,
    seriesId: rule.seriesId,
    indicator: rule.indicator,
    direction: rule.direction as RuleDirection,
    minTau: rule.minTau,
    maxSurrogateP: rule.maxSurrogateP,
    maxKendallP: null,
    levelThreshold: rule.levelThreshold,
    levelDirection: rule.levelDirection,
    persistence: rule.persistence,
    severity: rule.severity,
    quietPeriodHours: rule.quietPeriodHours,
    fdrLevel: rule.fdrLevel,
    active: rule.active,
    calibration: context.calibration ?? null,
    warnings: context.warnings ?? [],
    createdAt: rule.createdAt.toISOString(),
    updatedAt: rule.updatedAt.toISOString(),
  };
}
/** A rule as the API and the pages carry it (times as ISO 8601 strings). */
export type RuleRecord = ReturnType<typeof presentRule>;

/** Rules with their calibration and warnings, as the API and the series page show them. */
export async function presentRules(rules: AlertRule[]): Promise<RuleRecord[]> {
  const [calibrations, warnings] = await Promise.all([latestRuleCalibration(rules.map((r) => r.id)), ruleWarnings(rules)]);
  return rules.map((rule) => presentRule(rule, { calibration: calibrations.get(rule.id) ?? null, warnings: warnings.get(rule.id) ?? [] }));
}

/** Active rules with a false-discovery level on live series: the Benjamini–Hochberg family. */
async function fdrFamilySize(transaction?: Transaction): Promise<number> {
  const sequelize = await db();
  const [row] = await sequelize.query<{ m: number }>(
    `SELECT COUNT(*) AS m FROM alert_rules r JOIN series s ON s.id = r.series_id AND s.retired_at IS NULL WHERE r.active AND r.fdr_level IS NOT NULL`,
    { type: QueryTypes.SELECT, transaction },
  );
  return Number(row.m);
}

/**
 * The surrogate floor of false-discovery control, in words, when it bites. With N surrogates the smallest Monte
 * Carlo p is 1/(N + 1); Benjamini–Hochberg at level q over m p-values rejects the smallest alone only when
 * p_(1) ≤ q/m (Benjamini & Hochberg 1995, Sec. 3, step-up rule with k = 1), so a warning on one series among m can
 * pass only if 1/(N + 1) ≤ q/m, i.e. N ≥ m/q − 1. (Several series at the floor together can still pass: k of them
 * need 1/(N + 1) ≤ k·q/m.) Null when N is large enough.
 */
export function fdrFloorWarning(surrogates: number, q: number, m: number): string | null {
  const needed = Math.ceil(m / q - 1 - 1e-9);
  if (surrogates >= needed) return null;
  return `With ${surrogates} surrogates the smallest surrogate p is 1/${surrogates + 1} = ${(1 / (surrogates + 1)).toPrecision(2)}; Benjamini–Hochberg at q = ${q} over the ${m} rule${m === 1 ? '' : 's'} that use it passes a warning on one series alone only if its p ≤ q/m = ${(q / m).toPrecision(2)}, which needs at least ${needed} surrogates (N ≥ m/q − 1). Until the series runs that many, only several series warning at once can pass.`;
}

async function ruleWarnings(rules: AlertRule[]): Promise<Map<number, string[]>> {
  const out = new Map<number, string[]>();
  const fdrRules = rules.filter((r) => r.fdrLevel !== null && r.seriesId !== null);
  if (!fdrRules.length) return out;
  const m = Math.max(1, await fdrFamilySize());
  const series = await Series.findAll({ where: { id: { [Op.in]: [...new Set(fdrRules.map((r) => r.seriesId!))] } }, attributes: ['id', 'settings'] });
  const surrogatesOf = new Map(series.map((s) => [s.id, analysisSettingsSchema.parse(s.settings ?? {}).surrogates]));
  for (const rule of fdrRules) {
    const warning = fdrFloorWarning(surrogatesOf.get(rule.seriesId!) ?? 0, rule.fdrLevel!, m);
    if (warning) out.set(rule.id, [warning]);
  }
  return out;
}

type Criteria = Pick<RuleFields, 'indicator' | 'maxSurrogateP' | 'fdrLevel'>;

/**
 * Why a rule's criterion could never be judged on its series, by field (empty when it can): an indicator the
 * series does not compute; a surrogate p or false-discovery test on a series that runs no surrogates; a
 * threshold below the smallest p N surrogates can give (1/(N + 1)), which no evidence can ever meet (for BH at q
 * this holds for any family size: k p-values at the floor pass only if 1/(N + 1) ≤ k·q/m ≤ q); and, when the
 * series' latest analysis failed because its stretch is too short for the window, that failure. The rule
 * editor's preview shows these before a save; `assertJudgeable` refuses the save with them.
 */
export async function judgeabilityProblems(
  seriesId: number,
  rule: Criteria,
  transaction?: Transaction,
): Promise<{ series: string; fields: Record<string, string[]> }> {
  const series = await Series.findByPk(seriesId, { transaction });
  if (!series) throw new NotFoundError('Series');
  const settings = analysisSettingsSchema.parse(series.settings ?? {});
  const N = settings.surrogates;
  const floor = 1 / (N + 1);
  const fields: Record<string, string[]> = {};
  if (!(settings.indicators as readonly string[]).includes(rule.indicator))
    fields.indicator = [
      `${series.name} does not compute ${indicatorLabel(rule.indicator)} (its indicators: ${settings.indicators.map((name) => indicatorLabel(name)).join(', ')}). Add it to the series settings first.`,
    ];
  for (const [field, level] of [
    ['maxSurrogateP', rule.maxSurrogateP],
    ['fdrLevel', rule.fdrLevel],
  ] as const) {
    if (level === null) continue;
    if (N === 0)
      fields[field] = [
        `${series.name} runs no surrogates, so no surrogate p is ever computed and this test could never pass. Set surrogates (at least 99) in the series settings first.`,
      ];
    else if (level < floor)
      fields[field] = [
        `With ${N} surrogates the smallest surrogate p is 1/${N + 1} = ${floor.toPrecision(2)}, above ${level}: this test could never pass. Run at least ${Math.ceil(1 / level - 1)} surrogates.`,
      ];
  }
  const latest = await AnalysisSnapshot.findOne({ where: { seriesId }, order: [['id', 'DESC']], attributes: ['id', 'status', 'error'], transaction });
  if (latest?.status === 'error' && latest.error && /too short/i.test(latest.error))
    fields._ = [`The latest analysis of ${series.name} could not judge anything: ${latest.error}`];
  return { series: series.name, fields };
}

/** Refuses (422, with the field to change) a rule whose criterion its series can never judge (see judgeabilityProblems). */
async function assertJudgeable(seriesId: number, rule: Criteria, transaction: Transaction): Promise<void> {
  const { series, fields } = await judgeabilityProblems(seriesId, rule, transaction);
  const problems = Object.values(fields).flat();
  if (problems.length) throw new UnprocessableError(`This rule cannot be judged on ${series}: ${problems.join(' ')}`, fields);
}

/** Fields whose change makes the previous calibration describe another procedure. */
const CALIBRATED_FIELDS = [
  'indicator',
  'direction',
  'minTau',
  'maxSurrogateP',
  'levelThreshold',
  'levelDirection',
  'persistence',
  'quietPeriodHours',
  'fdrLevel',
  'active',
] as const;

/** Rules of one series, or the defaults for new series when `seriesId` is null (site rules are neither). */
export async function listRules(seriesId: number | null): Promise<AlertRule[]> {
  await db();
  return AlertRule.findAll({ where: seriesId === null ? { seriesId, siteId: null } : { seriesId }, order: [['id', 'ASC']] });
}

/**
 * Adds a rule to a series (or to the defaults when `seriesId` is null), refusing one its series cannot judge, and
 * queues its calibration (false alarms per year of the live procedure on surrogates) in the same transaction.
 */
export async function createRule(seriesId: number | null, input: RuleCreateInput, actor: Pick<Actor, 'id'>): Promise<AlertRule> {
  const { reason, ...fields } = ruleCreateSchema.parse(input);
  return writeTransaction(async (transaction) => {
    if (seriesId !== null) await assertJudgeable(seriesId, fields, transaction);
    const rule = await AlertRule.create({ ...fields, seriesId, createdBy: actor.id }, { transaction });
    await recordAudit(
      {
        actorId: actor.id,
        action: seriesId === null ? 'rule.default.create' : 'rule.create',
        entity: 'alert_rule',
        entityId: rule.id,
        details: { seriesId, ...fields, reason: reason ?? null },
      },
      transaction,
    );
    if (seriesId !== null && rule.active) await queueRuleCalibration(rule.id, actor, transaction);
    return rule;
  });
}

/**
 * Changes a rule, validating `input` by the rule's kind (ruleUpdateSchema, or siteRuleUpdateSchema for a site rule),
 * re-checking judgeability when the criteria change and queueing a new calibration when the procedure changed.
 */
export async function updateRule(id: number, input: unknown, actor: Pick<Actor, 'id'>): Promise<AlertRule> {
  return writeTransaction(async (transaction) => {
    const rule = await AlertRule.findByPk(id, { transaction });
    if (!rule) throw new NotFoundError('Rule');
    // A site rule keeps to the site-level indicators and the limits of siteRuleUpdateSchema.
    const { reason = null, ...changes } = (rule.siteId === null ? ruleUpdateSchema : siteRuleUpdateSchema).parse(input) as RuleUpdate;
    const before = presentRule(rule);
    const after = { indicator: rule.indicator as RuleFields['indicator'], maxSurrogateP: rule.maxSurrogateP, fdrLevel: rule.fdrLevel, ...changes };
    // Checked when the criteria change or the rule is switched on; switching an unjudgeable rule off is always allowed.
    const judgedAgain = changes.active === true || ((changes.active ?? rule.active) && ['indicator', 'maxSurrogateP', 'fdrLevel'].some((f) => f in changes));
    if (rule.seriesId !== null && judgedAgain) await assertJudgeable(rule.seriesId, after, transaction);
    await rule.update(changes, { transaction });
    await recordAudit({ actorId: actor.id, action: 'rule.update', entity: 'alert_rule', entityId: id, details: { before, changes, reason } }, transaction);
    const recalibrate = CALIBRATED_FIELDS.some((f) => f in changes && (changes as Record<string, unknown>)[f] !== (before as Record<string, unknown>)[f]);
    if (rule.seriesId !== null && rule.active && recalibrate) await queueRuleCalibration(rule.id, actor, transaction);
    return rule;
  });
}

/**
 * Deletes a rule that never produced an alert. A rule with alerts is part of their evidence, so it is
 * deactivated instead (its alerts keep pointing at the thresholds that raised them).
 */
export async function deleteRule(id: number, actor: Pick<Actor, 'id'>): Promise<{ deleted: boolean; deactivated: boolean }> {
  return writeTransaction(async (transaction) => {
    const rule = await AlertRule.findByPk(id, { transaction });
    if (!rule) throw new NotFoundError('Rule');
    const hasAlerts = (await Alert.count({ where: { ruleId: id }, transaction })) > 0;
    if (hasAlerts) {
      await rule.update({ active: false }, { transaction });
    } else {
      await RuleEvaluation.destroy({ where: { ruleId: id }, transaction });
      await SiteRuleEvaluation.destroy({ where: { ruleId: id }, transaction });
      await BacktestJob.destroy({ where: { ruleId: id }, transaction });
      await rule.destroy({ transaction });
    }
    await recordAudit(
      { actorId: actor.id, action: hasAlerts ? 'rule.deactivate' : 'rule.delete', entity: 'alert_rule', entityId: id, details: presentRule(rule) },
      transaction,
    );
    return { deleted: !hasAlerts, deactivated: hasAlerts };
  });
}

/** How a rule stands on its series after its latest judgement. */
export type RuleStanding = 'met' | 'building' | 'not-met' | 'cannot-judge' | 'not-yet-judged';

export function standingOf(evaluation: Pick<RuleEvaluation, 'outcome'> | null): RuleStanding {
  if (!evaluation) return 'not-yet-judged';
  if (evaluation.outcome.startsWith('cannot-judge')) return 'cannot-judge';
  if (evaluation.outcome.startsWith('not-met')) return 'not-met';
  return evaluation.outcome === 'building' ? 'building' : 'met';
}

/**
 * Every rule of a series with its latest judgement, so a rule that could not be judged in the last cycle (failed
 * analysis, indicator not computed, windows below the coverage floor, no surrogate p) says so on the series page
 * instead of staying silent. One indexed lookup per rule.
 */
export async function ruleStatuses(seriesId: number) {
  const rules = await listRules(seriesId);
  const [records, latest] = await Promise.all([
    presentRules(rules),
    Promise.all(rules.map((r) => RuleEvaluation.findOne({ where: { ruleId: r.id }, order: [['snapshotId', 'DESC']] }))),
  ]);
  return records.map((rule, i) => {
    const e = latest[i];
    return {
      rule,
      standing: standingOf(e),
      latest: e
        ? {
            snapshotId: e.snapshotId,
            at: e.createdAt.toISOString(),
            outcome: e.outcome,
            direction: e.direction ?? 'rising',
            tau: e.tau,
            surrogateP: e.surrogateP,
            qValue: e.qValue,
            streak: e.streak,
          }
        : null,
    };
  });
}
/** A rule with its latest judgement, as the series page and its API carry it (times as ISO 8601 strings). */
export type RuleStatus = Awaited<ReturnType<typeof ruleStatuses>>[number];
