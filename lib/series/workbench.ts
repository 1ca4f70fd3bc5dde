import 'server-only';
import { QueryTypes } from 'sequelize';
import { AnalysisSnapshot, IngestRun, Mark, db } from '@/models';
import { cachedRead } from '@/lib/db/read-cache';
import { observationExtent } from '@/lib/analysis/observations';
import { fetchSettingsHistory, type SettingsHistoryEntry } from '@/lib/analysis/settings-history';
import { loadSnapshotView } from '@/lib/analysis/snapshot';
import type { AnalysisView } from '@/lib/analysis/view';
import { analysisSettingsSchema, type AnalysisSettings } from '@/lib/engine/settings';
import { findSeriesBySlug, presentSeries, type SeriesRecord } from '@/lib/series/registry';
import { presentRun } from '@/lib/intake/runs';
import type { IngestRunRecord } from '@/lib/intake/run-record';
import { provenanceView, type ProvenanceView } from '@/lib/analysis/provenance-record';

export interface Workbench {
  series: SeriesRecord;
  savedSettings: AnalysisSettings;
  view: AnalysisView | null;
  snapshot: { id: number; createdAt: string; status: string; error: string | null; dataTo: number | null } | null;
  extent: { count: number; first: number | null; last: number | null };
  /** the last five ingest runs, newest first */
  runs: IngestRunRecord[];
  rejectedRows: number;
  history: SettingsHistoryEntry[];
  marks: { id: number; at: number; note: string; kind: 'tipping-point' | 'maintenance' }[];
  /** where the numbers drawn (the last good analysis) came from; null before provenance was recorded */
  provenance: ProvenanceView | null;
}

/**
 * Everything the series workbench shows on first paint, read in parallel: the latest snapshot (its view, or its
 * error), the record's extent, the last intake runs and the rejected-row total, the settings history and the
 * marked tipping points.
 */
export async function fetchWorkbench(slug: string): Promise<Workbench> {
  return cachedRead(`workbench:${slug}`, () => loadWorkbench(slug));
}

async function loadWorkbench(slug: string): Promise<Workbench> {
  const series = await findSeriesBySlug(slug);
  const sequelize = await db();
  const [snapshot, extent, runs, rejected, history, marks] = await Promise.all([
    AnalysisSnapshot.findOne({ where: { seriesId: series.id }, order: [['id', 'DESC']], attributes: { exclude: ['curves'] } }),
    observationExtent(series.id),
    IngestRun.findAll({ where: { seriesId: series.id }, order: [['id', 'DESC']], limit: 5 }),
    sequelize.query<{ total: number | null }>('SELECT SUM(rejected) AS total FROM ingest_runs WHERE series_id = :id', {
      replacements: { id: series.id },
      type: QueryTypes.SELECT,
    }),
    fetchSettingsHistory(series.id, 20),
    Mark.findAll({ where: { seriesId: series.id }, order: [['at', 'ASC']] }),
  ]);
  // An error snapshot explains why the evidence is stale; the view then comes from the last good one.
  const good =
    snapshot?.status === 'ok'
      ? snapshot
      : await AnalysisSnapshot.findOne({ where: { seriesId: series.id, status: 'ok' }, order: [['id', 'DESC']], attributes: { exclude: ['curves'] } });
  return {
    series: presentSeries(series),
    savedSettings: analysisSettingsSchema.parse(series.settings ?? {}),
    view: good ? await loadSnapshotView(good) : null,
    snapshot: snapshot
      ? {
          id: snapshot.id,
          createdAt: snapshot.createdAt.toISOString(),
          status: snapshot.status,
          error: snapshot.error,
          dataTo: snapshot.dataTo === null ? null : Number(snapshot.dataTo),
        }
      : null,
    extent,
    runs: runs.map((r) => presentRun(r)),
    rejectedRows: Number(rejected[0]?.total ?? 0),
    history,
    marks: marks.map((t) => ({ id: t.id, at: Number(t.at), note: t.note, kind: t.kind })),
    provenance: good?.provenance ? provenanceView(good.id, series.slug, good.provenance) : null,
  };
}
