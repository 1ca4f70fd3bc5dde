import { Op } from 'sequelize';
import { Transition, User, db, roleAtLeast } from '@/models';
import { fetchAlertDetail } from '@/lib/alerts/queries';
import { viewFromSnapshot } from '@/lib/analysis/view';
import type { Actor } from '@/lib/auth/guard';

/**
 * The alert page's data: the alert detail (`fetchAlertDetail`), its two snapshots as chart views, the series'
 * known transitions, and for triage roles the colleagues an alert can be handed to.
 */
export async function fetchAlertPage(id: number, actor: Actor) {
  const detail = await fetchAlertDetail(id, actor);
  await db();
  const [transitions, colleagues] = await Promise.all([
    Transition.findAll({ where: { seriesId: detail.series.id }, order: [['at', 'ASC']] }),
    roleAtLeast(actor.role, 'analyst')
      ? User.findAll({ where: { active: true, role: { [Op.in]: ['analyst', 'lead', 'admin'] } }, attributes: ['id', 'name'], order: [['name', 'ASC']] })
      : Promise.resolve(null),
  ]);
  const { first, latest } = detail.evidence;
  return {
    detail,
    firstView: first ? viewFromSnapshot(first) : null,
    latestView: latest && latest.id !== first?.id ? viewFromSnapshot(latest) : null,
    transitions: transitions.map((t) => ({ at: Number(t.at), note: t.note })),
    colleagues: colleagues?.map((u) => ({ id: u.id, name: u.name })) ?? null,
  };
}
