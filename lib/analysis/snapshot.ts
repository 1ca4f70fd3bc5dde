import { QueryTypes } from 'sequelize';
import { AnalysisSnapshot, WITHOUT_CHARTS, db, type Series } from '@/models';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { runAnalysis, summarizeAnalysis, type AnalysisResult } from '@/lib/engine/analyze';
import { curvesOf } from './curves';
import { viewFromSnapshot, type AnalysisView } from './view';
import { AnalysisInputError } from '@/lib/engine/errors';
import { loadObservations, observationExtent } from './observations';

/**
 * The summary kept on the snapshot: everything but per-point arrays. Surrogate taus and the sensitivity grid
 * live in `curves` only, so queue listings and rule evaluation read a small record.
 */
export function snapshotSummary(result: AnalysisResult): Record<string, unknown> {
  const summary = summarizeAnalysis(result);
  const significance: Record<string, unknown> = {};
  for (const [name, sig] of Object.entries(summary.significance)) {
    const { taus: _taus, ...rest } = sig!;
    significance[name] = rest;
  }
  const { sensitivity: _sensitivity, ...rest } = summary;
  return { ...rest, significance, hasSensitivity: result.sensitivity !== null };
}

/**
 * Runs the engine on a series as it stands and stores the outcome as a new snapshot, successful or not: an
 * error snapshot carries the engine's message (e.g. a gap longer than maxGap) so the series page can say why
 * there is no fresh evidence. Only the trailing span the settings ask for is read from the database.
 */
export async function refreshSeriesAnalysis(series: Series, options: { parallel?: boolean } = {}): Promise<AnalysisSnapshot> {
  await db();
  const settings = analysisSettingsSchema.parse(series.settings ?? {});
  const intervalMs = series.intervalMs === null ? undefined : Number(series.intervalMs);
  const started = performance.now();
  let range: { from?: number } = {};
  if (settings.spanPoints !== null && intervalMs !== undefined) {
    const extent = await observationExtent(series.id);
    // spanPoints intervals before the last reading cover spanPoints + 1 grid points: one to spare, so the engine's
    // own span cut (after gridding), not this read, decides where the span starts.
    if (extent.last !== null) range = { from: extent.last - settings.spanPoints * intervalMs };
  }
  const observations = await loadObservations(series.id, range);
  const n = observations.time.length;
  const dataFrom = n ? observations.time[0] : null;
  const dataTo = n ? observations.time[n - 1] : null;
  try {
    const result = await runAnalysis({ ...observations, intervalMs }, settings, options);
    // Through JSON first, so the saved view is exactly the one the stored row's curves would give (NaN → null).
    const stored = JSON.parse(JSON.stringify({ summary: snapshotSummary(result), curves: curvesOf(result) }));
    return await AnalysisSnapshot.create({
      seriesId: series.id,
      settings,
      summary: stored.summary,
      curves: stored.curves,
      chartView: viewFromSnapshot({ settings, ...stored }) as unknown as Record<string, unknown>,
      status: 'ok',
      error: null,
      n: result.n,
      dataFrom,
      dataTo,
      durationMs: Math.round(performance.now() - started),
    });
  } catch (error) {
    if (!(error instanceof AnalysisInputError)) console.error(`[analysis] series ${series.slug} failed`, error);
    return AnalysisSnapshot.create({
      seriesId: series.id,
      settings,
      summary: {},
      curves: null,
      chartView: null,
      status: 'error',
      error: error instanceof AnalysisInputError ? error.message : `The analysis failed unexpectedly: ${error instanceof Error ? error.message : String(error)}`,
      n,
      dataFrom,
      dataTo,
      durationMs: Math.round(performance.now() - started),
    });
  }
}

/**
 * The chart view of a snapshot read without its curves: the view saved with it, or, for a snapshot stored before
 * views were saved, one built from its curves (the only case that reads them). Null for a failed snapshot and
 * for one whose curves were pruned.
 */
export async function loadSnapshotView(snapshot: { id: number; status: string; chartView?: Record<string, unknown> | null }): Promise<AnalysisView | null> {
  if (snapshot.status !== 'ok') return null;
  if (snapshot.chartView) return snapshot.chartView as unknown as AnalysisView;
  const full = await AnalysisSnapshot.findByPk(snapshot.id, { attributes: ['id', 'status', 'settings', 'summary', 'curves'] });
  return full ? viewFromSnapshot(full) : null;
}

/** Snapshots per series that keep their curves besides those an alert points at (its first and latest evidence). */
export const CURVES_KEPT = 5;

/**
 * Drops the curves of a series' older snapshots (summary, settings and numbers stay): a series re-analysed every
 * few minutes would otherwise store megabytes of chart data a day. Kept: the newest CURVES_KEPT snapshots and
 * every snapshot an alert names as its first or latest evidence. Returns how many were thinned out.
 */
export async function pruneSnapshotCurves(seriesId: number): Promise<number> {
  const sequelize = await db();
  const thinned = await sequelize.query<{ id: number }>(
    `UPDATE analysis_snapshots SET curves = NULL, chart_view = NULL
     WHERE series_id = :seriesId AND curves IS NOT NULL
       AND id < (SELECT id FROM analysis_snapshots WHERE series_id = :seriesId ORDER BY id DESC LIMIT 1 OFFSET :offset)
       AND id NOT IN (SELECT first_snapshot_id FROM alerts WHERE series_id = :seriesId
                      UNION SELECT latest_snapshot_id FROM alerts WHERE series_id = :seriesId)
     RETURNING id`,
    { replacements: { seriesId, offset: CURVES_KEPT - 1 }, type: QueryTypes.SELECT },
  );
  return thinned.length;
}

/**
 * The latest snapshot of each live series when some active rule of that series has not judged it yet: after a
 * crash between analysis and evaluation, or when a lead adds a rule, the evidence at hand is judged on the next
 * cycle without waiting for new data. One indexed lookup per series.
 */
export async function unjudgedLatestSnapshots(): Promise<AnalysisSnapshot[]> {
  const sequelize = await db();
  const rows = await sequelize.query<{ id: number }>(
    `SELECT latest.id FROM (
       SELECT (SELECT a.id FROM analysis_snapshots a WHERE a.series_id = s.id ORDER BY a.id DESC LIMIT 1) AS id, s.id AS series_id
       FROM series s WHERE s.retired_at IS NULL) latest
     JOIN analysis_snapshots snap ON snap.id = latest.id AND snap.status = 'ok'
     WHERE EXISTS (SELECT 1 FROM alert_rules r WHERE r.series_id = latest.series_id AND r.active = 1
                   AND NOT EXISTS (SELECT 1 FROM rule_evaluations e WHERE e.rule_id = r.id AND e.snapshot_id = latest.id))`,
    { type: QueryTypes.SELECT },
  );
  if (!rows.length) return [];
  return AnalysisSnapshot.findAll({ where: { id: rows.map((r) => r.id) }, attributes: WITHOUT_CHARTS });
}
