import type { Transaction } from 'sequelize';
import { AlertRule, Series, Mark, writeTransaction } from '@/models';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { NotFoundError } from '@/lib/http/errors';
import type { MarkCreate } from '@/lib/schemas/backtest';
import { queueRuleCalibration } from '@/lib/backtest/jobs';
import { findSiteBySlug } from '@/lib/sites/registry';
import { presentMark, type MarkRecord } from './read';

/**
 * A mark moves the end of the record before the first tipping point every calibration copies, so each rule of the series is
 * calibrated again.
 */
async function recalibrateRulesOf(seriesId: number, actor: Pick<Actor, 'id'> | null, transaction: Transaction): Promise<void> {
  const rules = await AlertRule.findAll({ where: { seriesId, active: true }, attributes: ['id'], transaction });
  for (const rule of rules) await queueRuleCalibration(rule.id, actor, transaction);
}

export async function createMark(seriesId: number, input: MarkCreate, actor: Pick<Actor, 'id'>): Promise<MarkRecord> {
  return writeTransaction((transaction) => addMark(transaction, seriesId, input, actor));
}

/**
 * Marks inside the caller's transaction (a station file's maintenance column lands with its data); `actor` null for
 * the scheduler's drop-folder pass.
 */
export async function addMark(transaction: Transaction, seriesId: number, input: MarkCreate, actor: Pick<Actor, 'id'> | null): Promise<MarkRecord> {
  const row = await Mark.create({ seriesId, at: input.at, note: input.note, kind: input.kind, createdBy: actor?.id ?? null }, { transaction });
  // A mark moves where the live analysis starts: analyse the series again on the next cycle.
  await Series.update({ needsAnalysis: true }, { where: { id: seriesId }, transaction });
  await recordAudit(
    {
      actorId: actor?.id ?? null,
      action: 'mark.create',
      entity: 'mark',
      entityId: row.id,
      details: { seriesId, at: input.at, note: input.note, kind: input.kind },
    },
    transaction,
  );
  await recalibrateRulesOf(seriesId, actor, transaction);
  return presentMark(row);
}

/**
 * A maintenance visit for a whole site (a buoy's service, a station's relocation): one maintenance mark on every
 * active series of that site, in one transaction, so each analysed stretch starts after it. 404 when no active
 * series has that site.
 */
export async function markSiteMaintenance(
  slug: string,
  input: { at: number; note: string },
  actor: Pick<Actor, 'id'>,
): Promise<{ site: string; marks: MarkRecord[] }> {
  return writeTransaction(async (transaction) => {
    const site = await findSiteBySlug(slug, transaction);
    const series = await Series.findAll({ where: { siteId: site.id, retiredAt: null }, attributes: ['id'], order: [['id', 'ASC']], transaction });
    if (series.length === 0) throw new NotFoundError('Series at this site');
    const marks: MarkRecord[] = [];
    for (const { id } of series) marks.push(await addMark(transaction, id, { at: input.at, note: input.note, kind: 'maintenance' }, actor));
    return { site: site.name, marks };
  });
}

export async function removeMark(id: number, actor: Pick<Actor, 'id'>): Promise<void> {
  await writeTransaction(async (transaction) => {
    const row = await Mark.findByPk(id, { transaction });
    if (!row) throw new NotFoundError('Mark');
    await recordAudit({ actorId: actor.id, action: 'mark.delete', entity: 'mark', entityId: id, details: presentMark(row) }, transaction);
    await row.destroy({ transaction });
    await Series.update({ needsAnalysis: true }, { where: { id: row.seriesId }, transaction });
    await recalibrateRulesOf(row.seriesId, actor, transaction);
  });
}
