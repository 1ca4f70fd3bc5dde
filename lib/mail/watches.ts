import { Op, type Transaction } from 'sequelize';
import { Series, User, Watch, db, writeTransaction, type Alert } from '@/models';
import type { WatchMode } from '@/models/Watch';
import type { Actor, Role } from '@/lib/auth/roles';
import { UnprocessableError } from '@/lib/http/errors';
import { recordAudit } from '@/lib/audit';
import { enqueueMail } from '@/lib/mail/outbox';
import type { RenderedMail } from '@/lib/mail/templates';

/**
 * Sets one user's mail preference for one series ('none' keeps the row, so the choice is remembered): the signed-in
 * user's own choice, or a lead's for someone else (`userId`), audited with whose it is.
 */
export async function setWatch(actor: Pick<Actor, 'id'>, series: Series, mode: WatchMode, userId = actor.id, transaction?: Transaction): Promise<Watch> {
  const work = async (t: Transaction) => {
    const existing = await Watch.findOne({ where: { userId, seriesId: series.id }, transaction: t });
    const watch = existing
      ? await existing.update({ mode }, { transaction: t })
      : await Watch.create({ userId, seriesId: series.id, mode }, { transaction: t });
    await recordAudit(
      { actorId: actor.id, action: userId === actor.id ? 'watch.set' : 'watch.set-for', entity: 'series', entityId: series.id, details: { mode, userId } },
      t,
    );
    return watch;
  };
  return transaction ? work(transaction) : writeTransaction(work);
}

/** One active user and how they hear of a series' alerts ('none' also when they never chose). */
export interface SeriesWatcher {
  userId: number;
  name: string;
  email: string;
  role: Role;
  mode: WatchMode;
}

/** Every active user with their watch mode for a series, by name: the "who hears" panel. Two queries. */
export async function seriesWatchers(seriesId: number): Promise<SeriesWatcher[]> {
  await db();
  const [users, watches] = await Promise.all([
    User.findAll({
      where: { active: true },
      attributes: ['id', 'name', 'email', 'role'],
      order: [
        ['name', 'ASC'],
        ['id', 'ASC'],
      ],
    }),
    Watch.findAll({ where: { seriesId }, attributes: ['userId', 'mode'] }),
  ]);
  const modeOf = new Map(watches.map((w) => [w.userId, w.mode]));
  return users.map((u) => ({ userId: u.id, name: u.name, email: u.email, role: u.role, mode: modeOf.get(u.id) ?? 'none' }));
}

/** A lead sets several users' modes for a series in one transaction (each change audited); unknown or inactive users are refused. */
export async function setSeriesWatchers(actor: Pick<Actor, 'id'>, series: Series, changes: { userId: number; mode: WatchMode }[]): Promise<void> {
  await writeTransaction(async (transaction) => {
    const ids = [...new Set(changes.map((c) => c.userId))];
    const known = new Set((await User.findAll({ where: { id: { [Op.in]: ids }, active: true }, attributes: ['id'], transaction })).map((u) => u.id));
    const unknown = ids.filter((id) => !known.has(id));
    if (unknown.length)
      throw new UnprocessableError(`No active user with id ${unknown.join(', ')}.`, { watchers: [`unknown or inactive user: ${unknown.join(', ')}`] });
    for (const change of changes) await setWatch(actor, series, change.mode, change.userId, transaction);
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

/** Active users watching a series (or any of several) in one of `modes`, each once. */
export async function watchersOf(seriesId: number | number[], modes: WatchMode[], transaction?: Transaction): Promise<User[]> {
  const watches = await Watch.findAll({ where: { seriesId, mode: { [Op.in]: modes } }, attributes: ['userId'], transaction });
  if (!watches.length) return [];
  return User.findAll({ where: { id: { [Op.in]: watches.map((w) => w.userId) }, active: true }, order: [['id', 'ASC']], transaction });
}

/**
 * Who hears of an alert: the watchers of its series, or for a site alert the watchers of any active series of the
 * site (a site has no watch list of its own; its series' watchers are the people who follow it).
 */
export async function watchersOfAlert(alert: Pick<Alert, 'seriesId' | 'siteId'>, modes: WatchMode[], transaction?: Transaction): Promise<User[]> {
  if (alert.seriesId !== null) return watchersOf(alert.seriesId, modes, transaction);
  const members = await Series.findAll({ where: { siteId: alert.siteId, retiredAt: null }, attributes: ['id'], transaction });
  return members.length
    ? watchersOf(
        members.map((m) => m.id),
        modes,
        transaction,
      )
    : [];
}

/**
 * Queues `mail` to each of `recipients` in the caller's transaction, once per person and event: the dedupe key is
 * `${kind}:${event}:user-${id}`, so a repeated call (another scheduler, a retry) queues nothing more. O(recipients).
 */
export async function mailEach(
  recipients: Pick<User, 'id' | 'email'>[],
  kind: string,
  event: string,
  mail: RenderedMail,
  transaction: Transaction,
): Promise<void> {
  for (const user of recipients) {
    await enqueueMail({ kind, dedupeKey: `${kind}:${event}:user-${user.id}`, to: user.email, ...mail }, transaction);
  }
}

/**
 * Mails the people who hear of an alert at once (watchersOfAlert, mode 'immediate'); digest readers hear of it in
 * their next digest, which lists alerts opened or closed since the last one.
 */
export async function mailAlertWatchers(
  alert: Pick<Alert, 'id' | 'seriesId' | 'siteId'>,
  mail: RenderedMail,
  kind: string,
  transaction: Transaction,
): Promise<void> {
  await mailEach(await watchersOfAlert(alert, ['immediate'], transaction), kind, String(alert.id), mail, transaction);
}
