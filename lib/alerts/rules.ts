import type { Transaction } from 'sequelize';
import { Alert, AlertRule, BacktestJob, RuleEvaluation, db, writeTransaction } from '@/models';
import { NotFoundError } from '@/lib/http/errors';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/guard';
import { ruleCreateSchema, ruleUpdateSchema, type RuleCreateInput, type RuleUpdate } from '@/lib/schemas/rule';

/** The public shape of a rule. */
export function presentRule(rule: AlertRule) {
  return {
    id: rule.id,
    seriesId: rule.seriesId,
    indicator: rule.indicator,
    minTau: rule.minTau,
    maxSurrogateP: rule.maxSurrogateP,
    maxKendallP: rule.maxKendallP,
    levelThreshold: rule.levelThreshold,
    levelDirection: rule.levelDirection,
    persistence: rule.persistence,
    severity: rule.severity,
    quietPeriodHours: rule.quietPeriodHours,
    fdrLevel: rule.fdrLevel,
    active: rule.active,
    createdAt: rule.createdAt,
    updatedAt: rule.updatedAt,
  };
}
export type RuleRecord = ReturnType<typeof presentRule>;

/** Rules of one series, or the defaults for new series when `seriesId` is null. */
export async function listRules(seriesId: number | null): Promise<AlertRule[]> {
  await db();
  return AlertRule.findAll({ where: { seriesId }, order: [['id', 'ASC']] });
}

/** Adds a rule to a series (or to the defaults when `seriesId` is null). */
export async function createRule(seriesId: number | null, input: RuleCreateInput, actor: Pick<Actor, 'id'>): Promise<AlertRule> {
  const fields = ruleCreateSchema.parse(input);
  return writeTransaction(async (transaction) => {
    const rule = await AlertRule.create({ ...fields, seriesId, createdBy: actor.id }, { transaction });
    await recordAudit({ actorId: actor.id, action: seriesId === null ? 'rule.default.create' : 'rule.create', entity: 'alert_rule', entityId: rule.id, details: { seriesId, ...fields } }, transaction);
    return rule;
  });
}

export async function findRule(id: number): Promise<AlertRule> {
  await db();
  const rule = await AlertRule.findByPk(id);
  if (!rule) throw new NotFoundError('Rule');
  return rule;
}

export async function updateRule(id: number, input: RuleUpdate, actor: Pick<Actor, 'id'>): Promise<AlertRule> {
  const changes = ruleUpdateSchema.parse(input);
  return writeTransaction(async (transaction) => {
    const rule = await AlertRule.findByPk(id, { transaction });
    if (!rule) throw new NotFoundError('Rule');
    const before = presentRule(rule);
    await rule.update(changes, { transaction });
    await recordAudit({ actorId: actor.id, action: 'rule.update', entity: 'alert_rule', entityId: id, details: { before, changes } }, transaction);
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
      await BacktestJob.destroy({ where: { ruleId: id }, transaction });
      await rule.destroy({ transaction });
    }
    await recordAudit({ actorId: actor.id, action: hasAlerts ? 'rule.deactivate' : 'rule.delete', entity: 'alert_rule', entityId: id, details: presentRule(rule) }, transaction);
    return { deleted: !hasAlerts, deactivated: hasAlerts };
  });
}

/** Copies the default rules (series null) onto a freshly created series, inside its creation transaction. */
export async function applyDefaultRules(seriesId: number, transaction: Transaction): Promise<number> {
  const defaults = await AlertRule.findAll({ where: { seriesId: null, active: true }, transaction });
  for (const rule of defaults) {
    const { id: _id, createdAt: _c, updatedAt: _u, seriesId: _s, ...fields } = rule.get({ plain: true });
    await AlertRule.create({ ...fields, seriesId }, { transaction });
  }
  return defaults.length;
}
