import { Op, QueryTypes, type Transaction } from 'sequelize';
import { sampleStandardDeviation } from 'simple-statistics';
import { AnalysisSnapshot, Mark, WITHOUT_CHARTS, db, type Series } from '@/models';
import { analysisSettingsSchema, type AnalysisSettings } from '@/lib/engine/settings';
import { runAnalysis, summarizeAnalysis, type AnalysisInput, type AnalysisResult } from '@/lib/engine/analyze';
import { extentPoints } from '@/lib/engine/extent';
import { curvesOf } from './curves';
import { completeSavedView, viewFromSnapshot, type AnalysisView } from './view';
import { AnalysisInputError } from '@/lib/engine/errors';
import { provenanceOf } from './provenance';
import { loadObservations, observationExtent, type ObservationRange } from './observations';

/**
 * The spread of the surrogate taus of one indicator: `nullSd` is their sample standard deviation (n − 1), the
 * null distribution's own spread of tau, which the quiet-period override measures "clearly stronger" against
 * (the independent-data formula understates it many times on overlapping windows); `nullCount` is how many finite
 * taus it rests on. Null below two taus. O(N).
 */
function nullSpread(taus: readonly number[]): { nullSd: number | null; nullCount: number } {
  const finite = taus.filter(Number.isFinite);
  return { nullSd: finite.length >= 2 ? sampleStandardDeviation(finite) : null, nullCount: finite.length };
}

/**
 * The summary kept on the snapshot: everything but per-point arrays. Surrogate taus and the sensitivity grid
 * live in `curves` only, so queue listings and rule evaluation read a small record; each significance entry keeps
 * the taus' spread instead (nullSd, nullCount). `shifts` (detected abrupt shifts) and `stretch` (what was judged
 * and why it starts there) are named here so they stay on the summary whatever the engine's summary carries.
 */
function snapshotSummary(result: AnalysisResult): Record<string, unknown> {
  const summary = summarizeAnalysis(result);
  const significance: Record<string, unknown> = {};
  for (const [name, sig] of Object.entries(summary.significance)) {
    const { taus, ...rest } = sig!;
    significance[name] = { ...rest, ...nullSpread(taus) };
  }
  const { sensitivity: _sensitivity, ...rest } = summary;
  return { ...rest, shifts: result.shifts, stretch: result.stretch, significance, hasSensitivity: result.sensitivity !== null };
}

/**
 * The marks of a series the live analysis starts after (marked tipping points and maintenance breaks), as the engine's
 * `breaks`: only those after `from` (earlier ones lie before the data read, so the span cut already excludes them)
 * and at or before the last reading (a break noted ahead of its data waits for that data). Oldest first.
 */
export async function seriesBreaks(
  seriesId: number,
  range: { from?: number; to?: number | null } = {},
  transaction?: Transaction,
): Promise<NonNullable<AnalysisInput['breaks']>> {
  const at: Record<symbol, number> = {};
  if (range.from !== undefined) at[Op.gt] = range.from;
  if (range.to !== undefined && range.to !== null) at[Op.lte] = range.to;
  const where = Object.getOwnPropertySymbols(at).length ? { seriesId, at } : { seriesId };
  const marks = await Mark.findAll({
    where,
    attributes: ['at', 'kind'],
    order: [
      ['at', 'ASC'],
      ['id', 'ASC'],
    ],
    transaction,
  });
  return marks.map((mark) => ({ time: Number(mark.at), kind: mark.kind }));
}

/**
 * The stretch of a series' record the settings' span can reach, to read from the database instead of the whole
 * record: the span as points (a fraction of the whole record, "<n> points", or an ISO 8601 duration over the
 * series' interval) counted back from the last reading, with one interval to spare so that the engine's own cut
 * after gridding, not this read, decides where the span starts. Everything when there is no span or no declared
 * interval (the engine then infers it from all the data). O(1) queries.
 */
export async function spanReadRange(
  seriesId: number,
  settings: AnalysisSettings,
  intervalMs: number | undefined,
): Promise<{ range: ObservationRange; last: number | null }> {
  const extent = await observationExtent(seriesId);
  if (settings.span === null || intervalMs === undefined || extent.first === null || extent.last === null) return { range: {}, last: extent.last };
  const recordPoints = Math.floor((extent.last - extent.first) / intervalMs) + 1;
  const points = Math.ceil(extentPoints(settings.span, recordPoints, intervalMs, 'utc-ms'));
  return { range: { from: extent.last - points * intervalMs }, last: extent.last };
}

/**
 * Runs the engine on a series as it stands and stores the outcome as a new snapshot, successful or not: an
 * error snapshot carries the engine's message (e.g. a gap longer than maxGap, a stretch since the last mark too
 * short for the window) so the series page can say why there is no fresh evidence. Only the trailing span the
 * settings ask for is read from the database, and the marks inside it go to the engine as breaks, so the analysis
 * judges only the stretch since the last marked tipping point or maintenance break (or detected shift).
 */
export async function refreshSeriesAnalysis(series: Series, options: { parallel?: boolean } = {}): Promise<AnalysisSnapshot> {
  await db();
  const settings = analysisSettingsSchema.parse(series.settings ?? {});
  const intervalMs = series.intervalMs === null ? undefined : Number(series.intervalMs);
  const started = performance.now();
  const { range, last } = await spanReadRange(series.id, settings, intervalMs);
  const [observations, breaks] = await Promise.all([loadObservations(series.id, range), seriesBreaks(series.id, { from: range.from, to: last })]);
  const n = observations.time.length;
  const dataFrom = n ? observations.time[0] : null;
  const dataTo = n ? observations.time[n - 1] : null;
  const provenance = await provenanceOf(series.id, observations, settings, { intervalMs, breaks });
  try {
    const result = await runAnalysis({ ...observations, intervalMs, breaks }, settings, options);
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
      provenance,
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
      error:
        error instanceof AnalysisInputError ? error.message : `The analysis failed unexpectedly: ${error instanceof Error ? error.message : String(error)}`,
      n,
      dataFrom,
      dataTo,
      durationMs: Math.round(performance.now() - started),
      provenance,
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
  if (snapshot.chartView) return completeSavedView(snapshot.chartView as unknown as AnalysisView);
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
     WHERE EXISTS (SELECT 1 FROM alert_rules r WHERE r.series_id = latest.series_id AND r.active
                   AND NOT EXISTS (SELECT 1 FROM rule_evaluations e WHERE e.rule_id = r.id AND e.snapshot_id = latest.id))`,
    { type: QueryTypes.SELECT },
  );
  if (!rows.length) return [];
  return AnalysisSnapshot.findAll({ where: { id: rows.map((r) => r.id) }, attributes: WITHOUT_CHARTS });
}
