import { Op, QueryTypes, type Transaction } from 'sequelize';
import { sampleStandardDeviation } from 'simple-statistics';
import { AnalysisSnapshot, Mark, Series, WITHOUT_CHARTS, db, readTransaction, writeTransaction } from '@/models';
import { analysisSettingsSchema, type AnalysisSettings } from '@/lib/engine/settings';
import { summarizeAnalysis, type AnalysisInput, type AnalysisResult } from '@/lib/engine/analyze';
import { NULL_REFRESH, updateAnalysis, type AnalysisState } from '@/lib/engine/update';
import { config } from '@/lib/runtime/config';
import { extentPoints } from '@/lib/engine/extent';
import { curvesOf } from './curves';
import { completeSavedView, viewFromSnapshot, type AnalysisView } from './view';
import { AnalysisInputError } from '@/lib/engine/errors';
import { provenanceOf } from './provenance';
import { loadObservations, observationExtent, type ObservationRange } from './observations';
import { keepAnalysisState, loadAnalysisState } from './state';
import { currentDataVersion } from '@/lib/intake/data-versions';

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
  version?: number,
): Promise<{ range: ObservationRange; last: number | null }> {
  const extent = await observationExtent(seriesId, version);
  const pinned: ObservationRange = version === undefined ? {} : { version };
  if (settings.span === null || intervalMs === undefined || extent.first === null || extent.last === null) return { range: pinned, last: extent.last };
  const recordPoints = Math.floor((extent.last - extent.first) / intervalMs) + 1;
  const points = Math.ceil(extentPoints(settings.span, recordPoints, intervalMs, 'utc-ms'));
  return { range: { ...pinned, from: extent.last - points * intervalMs }, last: extent.last };
}

/** The scheduler's claim on a series lapsed before its analysis was stored; nothing was written. */
export class ClaimLostError extends Error {
  constructor(slug: string) {
    super(`the claim on the analysis of ${slug} lapsed before it was stored`);
    this.name = 'ClaimLostError';
  }
}

/** The engine's input read from a series' record: the observations of the span the settings reach, and the marks in it. */
interface RecordInput {
  observations: { time: Float64Array; value: Float64Array };
  breaks: NonNullable<AnalysisInput['breaks']>;
  range: ObservationRange;
}

/** Reads the span and its marks from the record as stored now, or as it stood at `version`. */
async function readRecord(series: Series, settings: AnalysisSettings, version?: number): Promise<RecordInput> {
  const intervalMs = series.intervalMs === null ? undefined : Number(series.intervalMs);
  const { range, last } = await spanReadRange(series.id, settings, intervalMs, version);
  const [observations, breaks] = await Promise.all([loadObservations(series.id, range), seriesBreaks(series.id, { from: range.from, to: last })]);
  return { observations, breaks, range };
}

/** What one run of the engine on a record gives, as a snapshot or a re-analysis stores it. */
export type RecordAnalysis = Pick<
  AnalysisSnapshot,
  'settings' | 'summary' | 'curves' | 'status' | 'error' | 'n' | 'dataFrom' | 'dataTo' | 'durationMs' | 'provenance'
> & { chartView: Record<string, unknown> | null };

/**
 * Runs the engine on a record read by `readRecord`, successful or not: an error outcome carries the engine's
 * message (e.g. a gap longer than maxGap, a stretch since the last mark too short for the window) so the page can
 * say why there is no fresh evidence. The provenance names the data version the input is, and whether the numbers
 * were continued from `previous` (the series' kept state, when `incremental` and exact: `updateAnalysis`,
 * lib/engine/update.ts) or computed in full, and why. `kept` is the state to keep after a success (null: keep none),
 * undefined after a failure, which leaves the kept state as it was.
 */
async function analyseRecord(
  series: Series,
  settings: AnalysisSettings,
  input: RecordInput,
  dataVersion: number,
  started: number,
  options: { parallel?: boolean; incremental: boolean; previous: { snapshotId: number; state: AnalysisState } | null },
): Promise<RecordAnalysis & { kept?: AnalysisState | null }> {
  const intervalMs = series.intervalMs === null ? undefined : Number(series.intervalMs);
  const { observations, breaks } = input;
  const n = observations.time.length;
  const dataFrom = n ? observations.time[0] : null;
  const dataTo = n ? observations.time[n - 1] : null;
  const provenance = await provenanceOf(series.id, observations, settings, { intervalMs, breaks, dataVersion, version: input.range.version });
  const { previous, incremental } = options;
  try {
    const { result, state, how } = await updateAnalysis({ ...observations, intervalMs, breaks }, settings, previous?.state ?? null, {
      parallel: options.parallel,
      incremental,
      refresh: { ...NULL_REFRESH, points: config().ANALYSIS_NULL_REFRESH_POINTS },
    });
    provenance.update = { mode: how.mode, reason: how.reason, basedOnSnapshot: how.mode === 'incremental' ? previous!.snapshotId : null };
    // Through JSON first, so the saved view is exactly the one the stored row's curves would give (NaN → null).
    const stored = JSON.parse(JSON.stringify({ summary: snapshotSummary(result), curves: curvesOf(result) }));
    return {
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
      kept: state,
    };
  } catch (error) {
    if (!(error instanceof AnalysisInputError)) console.error(`[analysis] series ${series.slug} failed`, error);
    return {
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
    };
  }
}

/**
 * Runs the engine on a series as it stood at data version `version` (its values rebuilt from the stored rows and
 * the earlier values reprocessing replaced), with the series' settings and marks as they are now, always in full
 * (a kept state belongs to the live record). Nothing is stored.
 */
export async function analyseAtVersion(series: Series, version: number, options: { parallel?: boolean } = {}): Promise<RecordAnalysis> {
  await db();
  const settings = analysisSettingsSchema.parse(series.settings ?? {});
  const started = performance.now();
  const input = await readRecord(series, settings, version);
  // eslint-disable-next-line @typescript-eslint/no-unused-vars -- a re-analysis keeps no state
  const { kept, ...analysis } = await analyseRecord(series, settings, input, version, started, { ...options, incremental: false, previous: null });
  return analysis;
}

/**
 * Runs the engine on a series as it stands and stores the outcome as a new snapshot, successful or not (see
 * `analyseRecord`). Only the trailing span the settings ask for is read from the database, and the marks inside it
 * go to the engine as breaks, so the analysis judges only the stretch since the last marked tipping point or
 * maintenance break (or detected shift). The snapshot records the data version it read: the version is taken before
 * the read, and when an intake run committed a newer one during the read, the record is read again as it stood at
 * that version, so the values analysed are always those of the recorded version (flags changed without new data
 * make no version; see `rowsAtVersion`).
 *
 * The analysis continues from the series' kept state when that is exact (switched off by ANALYSIS_INCREMENTAL=0).
 * The snapshot, the state it leaves and, with `markAnalysed`, the cleared `needsAnalysis` flag (only if no data
 * arrived since `dataChangedAt` was read, with the data version, at the start) are written in one transaction, and only while `stillClaimed` holds: a
 * process killed before it commits leaves the series due, with no snapshot, so a data change is analysed once.
 */
export async function refreshSeriesAnalysis(
  claimed: Series,
  options: {
    parallel?: boolean;
    markAnalysed?: { stillClaimed?: (transaction: Transaction) => Promise<boolean> };
  } = {},
): Promise<AnalysisSnapshot> {
  await db();
  // The series row (settings, dataChangedAt) and the data version are read at one moment: a change committed
  // before it is in both, so the flag clears once for it; one committed after leaves dataChangedAt moved and the
  // series due. Read at different moments, an intake landing between them would be analysed here yet leave the
  // series due, and the same data would be analysed twice.
  const { series, dataVersion } = await readTransaction(async (transaction) => ({
    series: (await Series.findByPk(claimed.id, { transaction })) ?? claimed,
    dataVersion: await currentDataVersion(claimed.id, transaction),
  }));
  const settings = analysisSettingsSchema.parse(series.settings ?? {});
  const started = performance.now();
  const incremental = config().ANALYSIS_INCREMENTAL;
  const [read, previous] = await Promise.all([readRecord(series, settings), incremental ? loadAnalysisState(series.id) : null]);
  const input = (await currentDataVersion(series.id)) !== dataVersion ? await readRecord(series, settings, dataVersion) : read;
  const { kept, ...analysis } = await analyseRecord(series, settings, input, dataVersion, started, { parallel: options.parallel, incremental, previous });
  return writeTransaction(async (transaction) => {
    // A claim that lapsed while the engine ran (and another scheduler took) stores nothing: that one analyses it.
    if (options.markAnalysed?.stillClaimed && !(await options.markAnalysed.stillClaimed(transaction))) throw new ClaimLostError(series.slug);
    const snapshot = await AnalysisSnapshot.create({ seriesId: series.id, ...analysis }, { transaction });
    // A failed analysis leaves the kept state as it was: the next one checks it against the record all the same.
    if (kept !== undefined) await keepAnalysisState(series.id, snapshot.id, kept, transaction);
    if (options.markAnalysed) {
      const seen = series.dataChangedAt;
      await Series.update(
        { needsAnalysis: false },
        { where: { id: series.id, needsAnalysis: true, dataChangedAt: seen === null ? { [Op.is]: null } : seen }, transaction },
      );
    }
    return snapshot;
  });
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
