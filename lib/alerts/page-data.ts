import 'server-only';
import { Op } from 'sequelize';
import { AnalysisSnapshot, Mark, SiteSnapshot, User, db, roleAtLeast } from '@/models';
import { provenanceView } from '@/lib/analysis/provenance-record';
import { siteProvenanceView } from '@/lib/sites/provenance-record';
import { fetchAlertDetail } from '@/lib/alerts/queries';
import { loadSnapshotView } from '@/lib/analysis/snapshot';
import { presentSiteSnapshot } from '@/lib/sites/analysis';
import type { Actor } from '@/lib/auth/roles';

/**
 * The alert page's data: the alert detail (`fetchAlertDetail`), its two snapshots as chart views, the series'
 * marked tipping points, for triage roles the colleagues an alert can be handed to, and the provenance of the
 * analyses it rests on. A site alert has no series snapshots: its latest site snapshot comes as `siteView`, and the
 * provenance of its first and latest site snapshots as `siteProvenance`.
 */
export async function fetchAlertPage(id: number, actor: Actor) {
  const detail = await fetchAlertDetail(id, actor, 'views');
  await db();
  const { first, latest } = detail.evidence;
  const series = detail.series;
  const evidenceIds = series ? [first?.id, latest?.id].filter((id): id is number => id !== undefined) : [];
  const siteEvidenceIds = series ? [] : [first?.id, latest?.id].filter((id): id is number => id !== undefined);
  const [marks, colleagues, firstView, latestView, recorded, siteSnapshot, siteRecorded] = await Promise.all([
    series ? Mark.findAll({ where: { seriesId: series.id }, order: [['at', 'ASC']] }) : [],
    roleAtLeast(actor.role, 'analyst')
      ? User.findAll({ where: { active: true, role: { [Op.in]: ['analyst', 'lead', 'admin'] } }, attributes: ['id', 'name'], order: [['name', 'ASC']] })
      : Promise.resolve(null),
    series && first ? loadSnapshotView(first) : null,
    series && latest && latest.id !== first?.id ? loadSnapshotView(latest) : null,
    AnalysisSnapshot.findAll({ where: { id: evidenceIds }, attributes: ['id', 'provenance'], order: [['id', 'ASC']] }),
    series || !latest ? null : SiteSnapshot.findByPk(latest.id),
    SiteSnapshot.findAll({ where: { id: siteEvidenceIds }, attributes: ['id', 'provenance'], order: [['id', 'ASC']] }),
  ]);
  const siteSlug = detail.site?.slug;
  return {
    detail,
    firstView,
    latestView,
    siteView: siteSnapshot ? presentSiteSnapshot(siteSnapshot) : null,
    marks: marks.map((t) => ({ at: Number(t.at), note: t.note })),
    colleagues: colleagues?.map((u) => ({ id: u.id, name: u.name })) ?? null,
    // the analyses this alert rests on, oldest first: what a reviewer is handed to reproduce them
    provenance: series ? recorded.flatMap((s) => (s.provenance ? [provenanceView(s.id, series.slug, s.provenance)] : [])) : [],
    siteProvenance: siteSlug ? siteRecorded.flatMap((s) => (s.provenance ? [siteProvenanceView(s.id, siteSlug, s.provenance)] : [])) : [],
  };
}
