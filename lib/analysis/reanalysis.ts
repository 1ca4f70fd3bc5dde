import 'server-only';
import { QueryTypes } from 'sequelize';
import { AnalysisSnapshot, Reanalysis, db, type Series } from '@/models';
import { recordAudit } from '@/lib/audit';
import { UnprocessableError } from '@/lib/http/errors';
import type { IndicatorName } from '@/lib/engine/settings';
import { currentDataVersion, listDataVersions } from '@/lib/intake/data-versions';
import { analyseAtVersion } from './snapshot';
import type { DataVersionsOverview, IndicatorTrendLine, ReanalysisRecord } from './reanalysis-record';
import { jsonPath } from '@/lib/db/dialect';

/** Re-analyses listed per series, newest first. */
const LISTED = 20;

type StoredSummary = {
  kendall?: Record<string, { tau: number | null; p: number | null; direction?: IndicatorTrendLine['direction'] }>;
  significance?: Record<string, { p: number | null }>;
};

/** Each indicator's tau, Kendall p and surrogate p from a stored summary (a snapshot's or a re-analysis's). */
export function trendLines(summary: Record<string, unknown>): IndicatorTrendLine[] {
  const { kendall = {}, significance = {} } = summary as StoredSummary;
  return Object.entries(kendall).map(([name, k]) => ({
    name: name as IndicatorName,
    direction: k.direction ?? null,
    tau: k.tau,
    kendallP: k.p,
    surrogateP: significance[name]?.p ?? null,
  }));
}

/** The newest live snapshot of the series that read exactly these data (same version and hash). */
async function liveSnapshotWithSameData(seriesId: number, version: number, sha256: string): Promise<number | null> {
  const sequelize = await db();
  const [row] = await sequelize.query<{ id: number }>(
    `SELECT id FROM analysis_snapshots WHERE series_id = :seriesId AND ${jsonPath(sequelize, 'provenance', '$.dataVersion', 'bigint')} = :version
      AND ${jsonPath(sequelize, 'provenance', '$.dataSha256')} = :sha256 ORDER BY id DESC LIMIT 1`,
    { replacements: { seriesId, version, sha256 }, type: QueryTypes.SELECT },
  );
  return row ? Number(row.id) : null;
}

async function present(row: Reanalysis, currentVersion: number | null): Promise<ReanalysisRecord> {
  return {
    id: row.id,
    dataVersion: row.dataVersion,
    onCurrentVersion: currentVersion === null ? false : row.dataVersion === currentVersion,
    status: row.status,
    error: row.error,
    n: row.n,
    dataFrom: row.dataFrom === null ? null : Number(row.dataFrom),
    dataTo: row.dataTo === null ? null : Number(row.dataTo),
    dataSha256: row.provenance.dataSha256,
    createdAt: row.createdAt.toISOString(),
    requestedBy: row.requestedBy,
    trends: trendLines(row.summary),
    sameDataAsSnapshot: await liveSnapshotWithSameData(row.seriesId, row.dataVersion, row.provenance.dataSha256),
  };
}

/**
 * Analyses a series on data version `version` (0 … its current version) with its settings and marks as they are now,
 * and keeps the outcome as a re-analysis: never as a live snapshot, whatever the version, so it never becomes the
 * evidence rules judge and mail about (the analysis job alone writes those, judging each in the same cycle). On an
 * earlier version it answers "what did the indicators say on the data before reprocessing?"; on the current one it
 * repeats the live analysis on demand. Audited. A version the series has not reached is a 422 naming the field.
 */
export async function reanalyseSeries(series: Series, version: number, actor: { id: number }): Promise<ReanalysisRecord> {
  await db();
  const current = await currentDataVersion(series.id);
  if (version > current) {
    throw new UnprocessableError('Some fields are not valid.', {
      version: [`The series is at data version ${current}; choose a version from 0 to ${current}.`],
    });
  }
  const outcome = await analyseAtVersion(series, version);
  const row = await Reanalysis.create({
    seriesId: series.id,
    dataVersion: version,
    settings: outcome.settings,
    summary: outcome.summary,
    status: outcome.status,
    error: outcome.error,
    n: outcome.n,
    dataFrom: outcome.dataFrom,
    dataTo: outcome.dataTo,
    durationMs: outcome.durationMs,
    provenance: outcome.provenance!,
    requestedBy: actor.id,
  });
  await recordAudit({
    actorId: actor.id,
    action: 'analysis.reanalyse',
    entity: 'series',
    entityId: series.id,
    details: { reanalysisId: row.id, dataVersion: version, currentVersion: current, status: row.status, dataSha256: row.provenance.dataSha256 },
  });
  return present(row, current);
}

/**
 * A series' data versions (newest first), the version its latest live analysis read, and its latest re-analyses.
 * `onCurrentVersion` of a re-analysis compares with the version the series is at now.
 */
export async function dataVersionsOverview(series: Series): Promise<DataVersionsOverview> {
  await db();
  const [currentVersion, versions, rows, snapshot] = await Promise.all([
    currentDataVersion(series.id),
    listDataVersions(series.id),
    Reanalysis.findAll({ where: { seriesId: series.id }, order: [['id', 'DESC']], limit: LISTED }),
    AnalysisSnapshot.findOne({ where: { seriesId: series.id, status: 'ok' }, order: [['id', 'DESC']], attributes: ['id', 'summary', 'provenance'] }),
  ]);
  return {
    currentVersion,
    liveSnapshot: snapshot ? { id: snapshot.id, dataVersion: snapshot.provenance?.dataVersion ?? null, trends: trendLines(snapshot.summary) } : null,
    versions,
    reanalyses: await Promise.all(rows.map((row) => present(row, currentVersion))),
  };
}
