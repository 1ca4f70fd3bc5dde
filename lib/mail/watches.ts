import { Op, type Transaction } from 'sequelize';
import { Series, User, Watch, db, writeTransaction } from '@/models';
import type { WatchMode } from '@/models/Watch';
import type { Actor } from '@/lib/auth/roles';
import { recordAudit } from '@/lib/audit';

/** Sets the signed-in user's mail preference for one series ('none' keeps the row, so the choice is remembered). */
export async function setWatch(actor: Pick<Actor, 'id'>, series: Series, mode: WatchMode): Promise<Watch> {
  return writeTransaction(async (transaction) => {
    const existing = await Watch.findOne({ where: { userId: actor.id, seriesId: series.id }, transaction });
    const watch = existing ? await existing.update({ mode }, { transaction }) : await Watch.create({ userId: actor.id, seriesId: series.id, mode }, { transaction });
    await recordAudit({ actorId: actor.id, action: 'watch.set', entity: 'series', entityId: series.id, details: { mode } }, transaction);
    return watch;
  });
}

export async function listWatches(actor: Pick<Actor, 'id'>) {
  await db();
  const watches = await Watch.findAll({ where: { userId: actor.id }, include: [{ model: Series, as: 'series' }], order: [['id', 'ASC']] });
  return watches.map((w) => {
    const series = (w as Watch & { series?: Series }).series;
    return { seriesId: w.seriesId, slug: series?.slug ?? null, name: series?.name ?? null, mode: w.mode, updatedAt: w.updatedAt };
  });
}

/** Active users watching a series in one of `modes`. */
export async function watchersOf(seriesId: number, modes: WatchMode[], transaction?: Transaction): Promise<User[]> {
  const watches = await Watch.findAll({ where: { seriesId, mode: { [Op.in]: modes } }, attributes: ['userId'], transaction });
  if (!watches.length) return [];
  return User.findAll({ where: { id: { [Op.in]: watches.map((w) => w.userId) }, active: true }, order: [['id', 'ASC']], transaction });
}
