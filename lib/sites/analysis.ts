import { Op, QueryTypes } from 'sequelize';
import { Alert, Series, SiteSnapshot, db } from '@/models';
import { thinIndicator, thinnedIndices } from '@/lib/analysis/curves';
import { loadObservations, observationExtent } from '@/lib/analysis/observations';
import { CHART_POINTS } from '@/lib/analysis/view';
import { cachedRead } from '@/lib/db/read-cache';
import { withLease } from '@/lib/db/leases';
import { commonGrid } from '@/lib/engine/common-grid';
import { AnalysisInputError } from '@/lib/engine/errors';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { SITE_INDICATORS, runSiteAnalysis, type ColumnDetrending, type SiteIndicatorName } from '@/lib/engine/site';
import { seriesSettingsSchema } from '@/lib/schemas/series';
import type { SiteAnalysisSummary, SiteAnalysisView, SiteCurves, SiteMember } from './analysis-shape';
import { findSiteBySlug } from './registry';
import { siteProvenanceOf } from './provenance';
import { currentDataVersion } from '@/lib/intake/data-versions';

/**
 * Grid instants a site-level analysis takes, counted back from the members' common end: the live default span of
 * a series ('1000 points'), so a site is judged over as many instants as each of its series.
 */
export const SITE_SPAN_POINTS = 1000;
/** Site snapshots kept per site; older ones are deleted (the site page shows the latest) unless an alert rests on them. */
export const SITE_SNAPSHOTS_KEPT = 20;
/** As the series analysis lease: long enough for hundreds of surrogates of a dozen series. */
const LEASE_MS = 10 * 60_000;

/**
 * The settings of every site-level analysis: the live defaults a new series gets (window half the stretch, 199
 * surrogates), with a span of SITE_SPAN_POINTS grid instants; each series is detrended as its own settings say.
 */
export function siteAnalysisSettings() {
  return seriesSettingsSchema.parse({ span: `${SITE_SPAN_POINTS} points` });
}

/**
 * Each site with at least two active series, and its basis now: "seriesId:latestSnapshotId" of every member in id
 * order (0 for a series not analysed yet). One query. O(series).
 */
async function currentBases(): Promise<Map<number, string>> {
  const sequelize = await db();
  const rows = await sequelize.query<{ site_id: number; id: number; snapshot_id: number }>(
    `SELECT s.site_id, s.id, COALESCE((SELECT MAX(a.id) FROM analysis_snapshots a WHERE a.series_id = s.id), 0) AS snapshot_id
     FROM series s WHERE s.site_id IS NOT NULL AND s.retired_at IS NULL ORDER BY s.site_id, s.id`,
    { type: QueryTypes.SELECT },
  );
  const members = new Map<number, string[]>();
  for (const row of rows) {
    const list = members.get(Number(row.site_id)) ?? [];
    list.push(`${Number(row.id)}:${Number(row.snapshot_id)}`);
    members.set(Number(row.site_id), list);
  }
  return new Map([...members].filter(([, list]) => list.length >= 2).map(([siteId, list]) => [siteId, list.join(',')]));
}

/**
 * Sites whose site-level snapshot is out of date: a member series has a newer analysis snapshot (new data, new
 * settings, a mark) than the latest site snapshot was made from, or the member set changed, or there is none yet.
 * Two queries. O(series + sites).
 */
export async function dueSites(): Promise<{ siteId: number; basis: string }[]> {
  const bases = await currentBases();
  if (bases.size === 0) return [];
  const sequelize = await db();
  const latest = await sequelize.query<{ site_id: number; basis: string }>(
    'SELECT site_id, basis FROM site_snapshots WHERE id IN (SELECT MAX(id) FROM site_snapshots GROUP BY site_id)',
    { type: QueryTypes.SELECT },
  );
  const made = new Map(latest.map((row) => [Number(row.site_id), row.basis]));
  return [...bases].filter(([siteId, basis]) => made.get(siteId) !== basis).map(([siteId, basis]) => ({ siteId, basis }));
}

const memberOf = (series: Series): SiteMember => ({ seriesId: series.id, slug: series.slug, name: series.name, unit: series.unit });

/**
 * Computes and stores a site's site-level snapshot: its active series with a declared interval and readings, put
 * on one grid (commonGrid: the coarsest interval, the latest SITE_SPAN_POINTS instants every member covers), then
 * runSiteAnalysis with siteAnalysisSettings. A site that cannot be judged (fewer than two usable series, a common
 * stretch too short for the window) gets an error snapshot that says why, as a series does. Older snapshots past
 * SITE_SNAPSHOTS_KEPT are deleted. Cost: the reads of the members' trailing records plus runSiteAnalysis.
 */
export async function refreshSiteAnalysis(siteId: number, basis: string): Promise<SiteSnapshot> {
  await db();
  const started = performance.now();
  const settings = siteAnalysisSettings();
  const series = await Series.findAll({ where: { siteId, retiredAt: null }, order: [['id', 'ASC']] });
  const leftOut: (SiteMember & { reason: string })[] = [];
  const candidates: { series: Series; interval: number; last: number }[] = [];
  for (const s of series) {
    const extent = await observationExtent(s.id);
    if (s.intervalMs === null) leftOut.push({ ...memberOf(s), reason: 'no declared sampling interval, so it has no place on a regular grid' });
    else if (extent.last === null) leftOut.push({ ...memberOf(s), reason: 'no readings yet' });
    else candidates.push({ series: s, interval: Number(s.intervalMs), last: extent.last });
  }
  const step = Math.max(0, ...candidates.map((c) => c.interval));
  const end = Math.min(...candidates.map((c) => c.last));
  // the span back from the common end, plus two of each member's own intervals for the interpolation at its edge
  // Each record's data version is read before the record, so a version recorded never claims data the grid lacks.
  const records = await Promise.all(
    candidates.map(async (c) => {
      const dataVersion = await currentDataVersion(c.series.id);
      return {
        ...(await loadObservations(c.series.id, { from: end - SITE_SPAN_POINTS * step - 2 * c.interval, to: end + 2 * c.interval })),
        interval: c.interval,
        dataVersion,
      };
    }),
  );
  const grid = commonGrid(records, SITE_SPAN_POINTS);
  const used = candidates.map((c) => memberOf(c.series));
  const detrending: ColumnDetrending[] = candidates.map((c) => {
    const own = analysisSettingsSchema.parse(c.series.settings ?? {});
    return { detrend: own.detrend, bandwidth: own.bandwidth, movingAverageWidth: own.movingAverageWidth };
  });
  const n = grid.time.length;
  const dataFrom = n ? grid.time[0] : null;
  const dataTo = n ? grid.time[n - 1] : null;
  const members = { used, leftOut };
  let snapshot: SiteSnapshot;
  try {
    if (used.length < 2)
      throw new AnalysisInputError(`site-level indicators need at least two series with a declared interval and readings; this site has ${used.length}`);
    if (n === 0) throw new AnalysisInputError('the series of this site have no stretch of time in common');
    const result = runSiteAnalysis({ values: grid.values, interval: grid.interval, timeKind: 'utc-ms', detrending }, settings);
    // A differenced residual is one shorter: its indicators line up with the grid's last n − offset instants.
    const time = grid.time.subarray(n - result.n);
    const { indices } = thinnedIndices(result.n, CHART_POINTS);
    const latest = {} as Record<SiteIndicatorName, number | null>;
    const indicators = {} as SiteCurves['indicators'];
    for (const d of SITE_INDICATORS) {
      const values = result.indicators[d.name];
      latest[d.name] = values[values.length - 1] ?? null;
      indicators[d.name] = thinIndicator(values, indices, result.evaluatedEvery);
    }
    const summary: SiteAnalysisSummary = {
      n: result.n,
      windowPoints: result.windowPoints,
      evaluatedEvery: result.evaluatedEvery,
      interval: grid.interval,
      dropped: grid.dropped,
      kendall: result.kendall,
      significance: result.significance,
      latest,
    };
    const kept = siteProvenanceOf(
      grid,
      candidates.map((c, k) => ({ slug: c.series.slug, dataVersion: records[k].dataVersion })),
      settings.seed,
    );
    snapshot = await SiteSnapshot.create({
      siteId,
      basis,
      settings: { ...settings, detrending },
      members,
      summary,
      curves: { time: indices.map((i) => time[i]), indicators },
      grid: kept.grid,
      provenance: kept.provenance,
      status: 'ok',
      error: null,
      n: result.n,
      dataFrom,
      dataTo,
      durationMs: Math.round(performance.now() - started),
    });
  } catch (error) {
    if (!(error instanceof AnalysisInputError)) console.error(`[site-analysis] site ${siteId} failed`, error);
    snapshot = await SiteSnapshot.create({
      siteId,
      basis,
      settings,
      members,
      summary: {},
      curves: null,
      grid: null,
      provenance: null,
      status: 'error',
      error:
        error instanceof AnalysisInputError
          ? error.message
          : `The site analysis failed unexpectedly: ${error instanceof Error ? error.message : String(error)}`,
      n,
      dataFrom,
      dataTo,
      durationMs: Math.round(performance.now() - started),
    });
  }
  const keep = await SiteSnapshot.findAll({ where: { siteId }, attributes: ['id'], order: [['id', 'DESC']], limit: SITE_SNAPSHOTS_KEPT });
  // The snapshots an alert rests on are its evidence and stay however old.
  const evidence = await Alert.findAll({ where: { siteId }, attributes: ['firstSnapshotId', 'latestSnapshotId'] });
  const kept = [...keep.map((k) => k.id), ...evidence.flatMap((a) => [a.firstSnapshotId, a.latestSnapshotId])];
  await SiteSnapshot.destroy({ where: { siteId, id: { [Op.notIn]: kept } } });
  return snapshot;
}

/**
 * The scheduler's pass (after the series of a cycle are analysed, jobs/analysis.ts): every due site (dueSites) gets
 * a fresh site-level snapshot under the lease `site-analysis:<id>`, so two schedulers never compute one site at once.
 */
export async function refreshSiteAnalyses(): Promise<SiteSnapshot[]> {
  const fresh: SiteSnapshot[] = [];
  for (const { siteId, basis } of await dueSites()) {
    const snapshot = await withLease(`site-analysis:${siteId}`, LEASE_MS, () => refreshSiteAnalysis(siteId, basis));
    if (snapshot) fresh.push(snapshot);
  }
  return fresh;
}

/** A stored site snapshot as the site page shows it; state `none` when there is none. O(curve points). */
export function presentSiteSnapshot(snapshot: SiteSnapshot | null): SiteAnalysisView {
  if (!snapshot)
    return { state: 'none', computedAt: null, error: null, members: { used: [], leftOut: [] }, summary: null, curves: null, dataFrom: null, dataTo: null };
  return {
    state: snapshot.status === 'ok' ? 'ok' : 'error',
    computedAt: snapshot.createdAt.toISOString(),
    error: snapshot.error,
    members: snapshot.members,
    summary: snapshot.status === 'ok' ? (snapshot.summary as SiteAnalysisSummary) : null,
    curves: snapshot.curves,
    dataFrom: snapshot.dataFrom,
    dataTo: snapshot.dataTo,
  };
}

/** The latest site-level snapshot of a site, by slug, as the site page shows it; 404 for an unknown slug. */
export async function fetchSiteAnalysis(slug: string): Promise<SiteAnalysisView> {
  const site = await findSiteBySlug(slug);
  return cachedRead(`site-analysis:${site.id}`, async () =>
    presentSiteSnapshot(await SiteSnapshot.findOne({ where: { siteId: site.id }, order: [['id', 'DESC']] })),
  );
}
