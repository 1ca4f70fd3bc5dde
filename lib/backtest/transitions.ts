import type { Transaction } from 'sequelize';
import { AlertRule, Series, Transition, db, writeTransaction } from '@/models';
import type { MarkKind } from '@/models/Transition';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/guard';
import { NotFoundError } from '@/lib/http/errors';
import type { TransitionCreate } from '@/lib/schemas/backtest';

export function presentTransition(t: Transition) {
  return { id: t.id, seriesId: t.seriesId, at: Number(t.at), atIso: new Date(Number(t.at)).toISOString(), note: t.note, kind: t.kind, createdBy: t.createdBy, createdAt: t.createdAt };
}
export type TransitionRecord = ReturnType<typeof presentTransition>;

/**
 * Marks of a series, oldest first: by default the known transitions only (what backtests score against, so a
 * maintenance break never counts as a transition); pass both kinds for every mark.
 */
export async function listTransitions(seriesId: number, kinds: readonly MarkKind[] = ['transition']): Promise<TransitionRecord[]> {
  await db();
  const rows = await Transition.findAll({ where: { seriesId, kind: [...kinds] }, order: [['at', 'ASC'], ['id', 'ASC']] });
  return rows.map(presentTransition);
}

/**
 * A mark moves the end of the pre-transition record every calibration copies, so each rule of the series is
 * calibrated again (queueRuleCalibration, imported lazily: jobs.ts imports this module).
 */
async function recalibrateRulesOf(seriesId: number, actor: Pick<Actor, 'id'>, transaction: Transaction): Promise<void> {
  const { queueRuleCalibration } = await import('./jobs');
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
