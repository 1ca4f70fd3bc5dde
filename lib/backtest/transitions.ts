import type { Transaction } from 'sequelize';
import { AlertRule, Series, Transition, writeTransaction } from '@/models';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { NotFoundError } from '@/lib/http/errors';
import type { TransitionCreate } from '@/lib/schemas/backtest';
import { queueRuleCalibration } from './jobs';
import { presentTransition, type TransitionRecord } from './marks';

/**
 * A mark moves the end of the pre-transition record every calibration copies, so each rule of the series is
 * calibrated again.
 */
async function recalibrateRulesOf(seriesId: number, actor: Pick<Actor, 'id'>, transaction: Transaction): Promise<void> {
  const rules = await AlertRule.findAll({ where: { seriesId, active: true }, attributes: ['id'], transaction });
  for (const rule of rules) await queueRuleCalibration(rule.id, actor, transaction);
}

export async function markTransition(seriesId: number, input: TransitionCreate, actor: Pick<Actor, 'id'>): Promise<TransitionRecord> {
  return writeTransaction(async (transaction) => {
    const row = await Transition.create({ seriesId, at: input.at, note: input.note, kind: input.kind, createdBy: actor.id }, { transaction });
    // A mark moves where the live analysis starts: analyse the series again on the next cycle.
    await Series.update({ needsAnalysis: true }, { where: { id: seriesId }, transaction });
    await recordAudit({ actorId: actor.id, action: 'transition.create', entity: 'transition', entityId: row.id, details: { seriesId, at: input.at, note: input.note, kind: input.kind } }, transaction);
    await recalibrateRulesOf(seriesId, actor, transaction);
    return presentTransition(row);
  });
}

export async function removeTransition(id: number, actor: Pick<Actor, 'id'>): Promise<void> {
  await writeTransaction(async (transaction) => {
    const row = await Transition.findByPk(id, { transaction });
    if (!row) throw new NotFoundError('Transition');
    await recordAudit({ actorId: actor.id, action: 'transition.delete', entity: 'transition', entityId: id, details: presentTransition(row) }, transaction);
    await row.destroy({ transaction });
    await Series.update({ needsAnalysis: true }, { where: { id: row.seriesId }, transaction });
    await recalibrateRulesOf(row.seriesId, actor, transaction);
  });
}
