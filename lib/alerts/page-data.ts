import 'server-only';
import { Op } from 'sequelize';
import { Mark, User, db, roleAtLeast } from '@/models';
import { fetchAlertDetail } from '@/lib/alerts/queries';
import { loadSnapshotView } from '@/lib/analysis/snapshot';
import type { Actor } from '@/lib/auth/roles';

/**
 * The alert page's data: the alert detail (`fetchAlertDetail`), its two snapshots as chart views, the series'
 * marked tipping points, and for triage roles the colleagues an alert can be handed to.
 */
export async function fetchAlertPage(id: number, actor: Actor) {
  const detail = await fetchAlertDetail(id, actor, 'views');
  await db();
  const { first, latest } = detail.evidence;
  const [marks, colleagues, firstView, latestView] = await Promise.all([
    Mark.findAll({ where: { seriesId: detail.series.id }, order: [['at', 'ASC']] }),
    roleAtLeast(actor.role, 'analyst')
      ? User.findAll({ where: { active: true, role: { [Op.in]: ['analyst', 'lead', 'admin'] } }, attributes: ['id', 'name'], order: [['name', 'ASC']] })
      : Promise.resolve(null),
    first ? loadSnapshotView(first) : null,
    latest && latest.id !== first?.id ? loadSnapshotView(latest) : null,
  ]);
  return {
    detail,
    firstView,
    latestView,
    marks: marks.map((t) => ({ at: Number(t.at), note: t.note })),
    colleagues: colleagues?.map((u) => ({ id: u.id, name: u.name })) ?? null,
  };
}
