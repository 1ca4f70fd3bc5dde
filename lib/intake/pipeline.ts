import crypto from 'node:crypto';
import { Op, Transaction } from 'sequelize';
import { IngestRun, Series, db, readTransaction, writeTransaction } from '@/models';
import type { IngestSource, IngestStatus } from '@/models/IngestRun';
import { recordAudit } from '@/lib/audit';
import { acquireLease, PROCESS_HOLDER, releaseLease, withLease } from '@/lib/db/leases';
import type { PushedObservation } from '@/lib/schemas/observation';
import { CsvFileError, readCsv, type CsvInput, type CsvLayout } from './csv';
import { collectCsvRows, collectPushedRows, type CollectedRows, type IntakeMapping, type RejectedRow } from './rows';
import { classifyAgainstStored, conflictRejections, ROW_CONFLICT, ROW_DUPLICATE, ROW_NEW, writeRows } from './store';
import { formatInstant, guessTimeFormat, type TimeFormat } from './time-formats';
import { enqueueWebhookEvent } from '@/lib/webhooks/outbox';
import { rejectedRunPayload } from '@/lib/webhooks/payloads';
import { judgeIncoming } from '@/lib/quality/records';
import { FLAG_LABELS, setterName, type QartodFlag } from '@/lib/quality/flags';
import type { PointFlags } from '@/lib/quality/run';
import { recordDataVersion } from './data-versions';
import { NetcdfFileError } from './netcdf/errors';
import { netcdfBytes, type NetcdfSource } from './netcdf/format';
import { collectNetcdfRows } from './netcdf/read';
import type { NetcdfLayout } from './netcdf/dataset';
import type { PreviewSummary } from './run-record';

/** A run's lease lives this long without renewal; a run whose holder died is marked failed once it has lapsed. */
const RUN_LEASE_MS = 30_000;
const runLease = (key: string) => `ingest-run:${key}`;

export interface IngestRequest {
  series: Series;
  source: IngestSource;
  fileName?: string | null;
  /** SHA-256 of the body as received; a body already applied to this series is recognised and not applied again. */
  contentHash?: string | null;
  /** CSV text, a body's bytes or a byte/text stream (drop files are streamed), or pushed JSON points. A body whose
   * bytes carry a netCDF signature is read as netCDF. */
  csv?: CsvInput;
  /** A netCDF file by path (a drop folder's), read instead of `csv`. */
  netcdf?: NetcdfSource;
  points?: PushedObservation[];
  /** Overrides of the series' CSV mapping (the upload screen's choices). */
  mapping?: Partial<IntakeMapping>;
  actor?: { id: number } | null;
  tokenId?: number | null;
  /** why the data were sent (a reprocessing note); kept with the data version the run makes */
  reason?: string | null;
  /** this delivery's duplicate policy instead of the series' (a lead's reprocessing upload replaces stored values) */
  duplicatePolicy?: DuplicatePolicy | null;
}

export type DuplicatePolicy = 'reject' | 'replace';

/** Whether a delivery replaces stored values that differ: its own policy when it names one, else the series'. */
export function replacesStored(series: Pick<Series, 'duplicatePolicy'>, override?: DuplicatePolicy | null): boolean {
  return (override ?? series.duplicatePolicy) === 'replace';
}

export interface IngestOutcome {
  runId: number;
  status: IngestStatus;
  /** True when the same content was applied before (`previousRunId`); nothing was applied this time. */
  alreadyApplied: boolean;
  previousRunId: number | null;
  rowsRead: number;
  accepted: number;
  duplicates: number;
  replaced: number;
  rejected: number;
  rejectedRows: RejectedRow[];
  notes: string[];
  message: string;
  durationMs: number;
  /** How many of the points written carry each QARTOD flag, by its label (e.g. { pass: 98, fail: 2 }). */
  flagged: Record<string, number>;
  /** the same counts per flag label split by what set the flag (a test's name, `source`, or `none`) */
  flaggedBy: Record<string, Record<string, number>>;
}

export function mappingFor(series: Series, overrides: Partial<IntakeMapping> = {}): IntakeMapping {
  const base = series.csvMapping;
  return {
    timeColumn: overrides.timeColumn ?? base.timeColumn ?? 0,
    valueColumn: overrides.valueColumn ?? base.valueColumn ?? 1,
    timeFormat: (overrides.timeFormat ?? base.timeFormat ?? 'iso8601') as TimeFormat,
    delimiter: overrides.delimiter,
    header: overrides.header,
    flagColumn: overrides.flagColumn ?? base.flagColumn,
    variable: overrides.variable ?? base.variable,
    flagVariable: overrides.flagVariable ?? base.flagVariable,
  };
}

async function collect(request: Pick<IngestRequest, 'series' | 'csv' | 'netcdf' | 'points' | 'mapping'>): Promise<CollectedRows> {
  const mapping = mappingFor(request.series, request.mapping);
  if (request.points) return collectPushedRows(request.points, mapping.timeFormat, request.series.timeZone);
  const netcdf = request.netcdf ?? netcdfBytes(request.csv);
  if (netcdf) return collectNetcdfRows(netcdf, { variable: mapping.variable, flagVariable: mapping.flagVariable });
  return collectCsvRows(request.csv ?? '', mapping, request.series.timeZone);
}

/** A file-level problem of either reader: the input is refused whole with the reader's code and message. */
export function isFileError(error: unknown): error is CsvFileError | NetcdfFileError {
  return error instanceof CsvFileError || error instanceof NetcdfFileError;
}

/** How the times of collected rows were read, for the run's report: the series' time format, or a netCDF file's CF units. */
export function timeReadingOf(rows: CollectedRows, timeFormat: string): string {
  return rows.netcdf ? `CF units "${rows.netcdf.timeUnits}", ${rows.netcdf.calendar} calendar` : timeFormat;
}

function plural(n: number, word: string): string {
  return `${n.toLocaleString('en-US')} ${word}${n === 1 ? '' : 's'}`;
}

export function summaryMessage(o: Pick<IngestOutcome, 'accepted' | 'duplicates' | 'replaced' | 'rejected' | 'rowsRead'>, firstReason?: string): string {
  if (o.accepted + o.duplicates + o.replaced === 0) {
    return `Nothing stored: all ${plural(o.rejected, 'row')} were rejected${firstReason ? ` (first: ${firstReason})` : ''}.`;
  }
  const parts = [`Stored ${plural(o.accepted, 'new point')}`];
  if (o.replaced) parts.push(`replaced ${plural(o.replaced, 'value')}`);
  if (o.duplicates) parts.push(`${plural(o.duplicates, 'duplicate')} already known`);
  if (o.rejected) parts.push(`${plural(o.rejected, 'row')} rejected (see report)`);
  return `${parts.join('; ')}.`;
}

export async function previousApplication(seriesId: number, contentHash: string, transaction?: Transaction): Promise<IngestRun | null> {
  return IngestRun.findOne({
    where: { seriesId, contentHash, status: 'succeeded' },
    order: [['id', 'ASC']],
    transaction,
  });
}

/**
 * The one way data gets in (drop folders, uploads and the push API all call it): parse → validate each row →
 * sort → compare with what is stored → write in ONE transaction → record the run.
 *
 * - Atomic: the new rows, the replaced values, the series' "needs analysis" mark and the run's final counts commit
 *   together or not at all. A process killed mid-way leaves only a run row in 'running' (swept to 'failed' later,
 *   see sweepStaleRuns) and no observation of it; running the same input again applies it exactly once.
 * - Idempotent by content: a body whose hash was already applied to the series is recorded as such and not applied.
 * - Partial by row: bad rows are rejected and reported (line, column, reason) while the good rows are stored; an input
 *   with no usable row is 'rejected'. Same instant and value as stored = duplicate; different value = rejected, or
 *   replaced when the duplicate policy is 'replace' (the delivery's own, a lead's reprocessing upload, else the series'). Duplicate instants inside one input with different
 *   values are all rejected, whatever the policy: there is no telling which one is right.
 */
export async function ingestObservations(request: IngestRequest): Promise<IngestOutcome> {
  return underNewRunLease((key, started) => ingestUnderLease(request, key, started));
}

/**
 * Runs an intake under the lease of a new run key (its runs carry the key, so `sweepStaleRuns` can tell a dead
 * holder's runs from live ones); `started` is when the work began.
 */
export async function underNewRunLease<T>(work: (key: string, started: number) => Promise<T>): Promise<T> {
  await db();
  const started = Date.now();
  const key = crypto.randomUUID();
  const outcome = await withLease(runLease(key), RUN_LEASE_MS, () => work(key, started));
  if (outcome === null) throw new Error('could not take the lease of a new ingest run');
  return outcome;
}

export type RunEnd = Partial<IngestOutcome> & { status: IngestStatus; message: string; report: Record<string, unknown> };

/** Records a run's end (counts, status, message, report) and answers it as an outcome. */
export async function finishRun(run: IngestRun, started: number, fields: RunEnd, transaction?: Transaction): Promise<IngestOutcome> {
  const durationMs = Date.now() - started;
  const counts = {
    rowsRead: fields.rowsRead ?? 0,
    accepted: fields.accepted ?? 0,
    duplicates: fields.duplicates ?? 0,
    replaced: fields.replaced ?? 0,
    rejected: fields.rejected ?? 0,
  };
  const record = (t?: Transaction) =>
    run.update(
      { ...counts, status: fields.status, message: fields.message, report: { ...run.report, ...fields.report }, durationMs, finishedAt: new Date() },
      { transaction: t },
    );
  if (fields.status === 'rejected') {
    // A rejection reaches webhook receivers: the delivery is written with the run's outcome, never one without the other.
    const rejected = { id: run.id, source: run.source, fileName: run.fileName, rowsRead: counts.rowsRead, rejected: counts.rejected, message: fields.message };
    const write = async (t: Transaction) => {
      await record(t);
      const series = run.seriesId === null ? null : await Series.findByPk(run.seriesId, { attributes: ['slug', 'name', 'site'], transaction: t });
      if (series) await enqueueWebhookEvent('intake.rejected', rejectedRunPayload(rejected, series, new Date()), t);
    };
    await (transaction ? write(transaction) : writeTransaction(write));
  } else {
    await record(transaction);
  }
  return {
    runId: run.id,
    status: fields.status,
    alreadyApplied: fields.alreadyApplied ?? false,
    previousRunId: fields.previousRunId ?? null,
    ...counts,
    rejectedRows: fields.rejectedRows ?? [],
    notes: fields.notes ?? [],
    message: fields.message,
    durationMs,
    flagged: fields.flagged ?? {},
    flaggedBy: fields.flaggedBy ?? {},
  };
}

/** What a run reports about its input besides the counts. */
export function inputReport(rows: CollectedRows, timeFormat: string, rejectedRows: RejectedRow[], rejectedTotal: number) {
  return {
    rejectedRows,
    rejectedTotal,
    notes: rows.notes,
    layout: describeLayout(rows.layout),
    netcdf: rows.netcdf ?? null,
    stats: rows.stats,
    timeFormat,
    first: rows.t.length ? rows.t[0] : null,
    last: rows.t.length ? rows.t[rows.t.length - 1] : null,
  };
}

/**
 * Stores collected rows into one series inside the caller's write transaction: compare with what is stored, judge
 * the flags, write, mark the series for analysis and audit; answers the run's end. A station feed calls it once per
 * series inside one transaction, so a file lands whole or not at all.
 */
export async function storeCollected(
  transaction: Transaction,
  series: Series,
  rows: CollectedRows,
  run: IngestRun,
  started: number,
  context: {
    source: IngestSource;
    fileName?: string | null;
    actorId: number | null;
    tokenId: number | null;
    timeFormat: string;
    reason?: string | null;
    duplicatePolicy?: DuplicatePolicy | null;
  },
): Promise<IngestOutcome> {
  const classified = await classifyAgainstStored(series.id, rows, transaction);
  const replace = replacesStored(series, context.duplicatePolicy);
  const quality = await judgeIncoming(transaction, series, rows);
  const { inserted, replaced } = await writeRows(transaction, series.id, rows, classified, replace, run.id, quality);
  const { flagged, flaggedBy } = flagCountsOfWritten(quality, classified.kind, replace);
  let duplicates = rows.duplicatesInInput;
  for (let i = 0; i < classified.kind.length; i++) if (classified.kind[i] === ROW_DUPLICATE) duplicates++;
  const conflicts = replace ? [] : conflictRejections(rows, classified);
  const rejectedRows = [...rows.rejectedRows, ...conflicts].sort((a, b) => a.line - b.line).slice(0, 1000);
  const counts = { rowsRead: rows.rowsRead, accepted: inserted, duplicates, replaced, rejected: rows.rejectedCount + conflicts.length };
  let dataVersion: number | null = null;
  if (inserted + replaced > 0) {
    const now = new Date();
    // The analysis job picks the series up from this mark; set with the data so neither exists without the other.
    await Series.update({ needsAnalysis: true, dataChangedAt: now }, { where: { id: series.id }, transaction });
    dataVersion = await recordDataVersion(transaction, series.id, { runId: run.id, inserted, replaced, reason: context.reason ?? null });
  }
  await recordAudit(
    {
      actorId: context.actorId,
      action: `intake.${context.source}`,
      entity: 'series',
      entityId: series.id,
      details: { runId: run.id, fileName: context.fileName ?? null, tokenId: context.tokenId, dataVersion, reason: context.reason ?? null, ...counts },
    },
    transaction,
  );
  return finishRun(
    run,
    started,
    {
      ...counts,
      status: 'succeeded',
      rejectedRows,
      notes: rows.notes,
      message: summaryMessage(counts),
      flagged,
      flaggedBy,
      report: { ...inputReport(rows, context.timeFormat, rejectedRows, counts.rejected), flagged, flaggedBy, dataVersion, reason: context.reason ?? null },
    },
    transaction,
  );
}

async function ingestUnderLease(request: IngestRequest, key: string, started: number): Promise<IngestOutcome> {
  const { series, contentHash = null } = request;
  const base = {
    seriesId: series.id,
    source: request.source,
    fileName: request.fileName ?? null,
    contentHash,
    userId: request.actor?.id ?? null,
    tokenId: request.tokenId ?? null,
    startedAt: new Date(started),
  };
  const finish = (run: IngestRun, fields: RunEnd, transaction?: Transaction) => finishRun(run, started, fields, transaction);
  const alreadyApplied = async (run: IngestRun, previous: IngestRun, transaction?: Transaction) =>
    finish(
      run,
      {
        status: 'succeeded',
        alreadyApplied: true,
        previousRunId: previous.id,
        message: `Same content as run #${previous.id} of ${previous.startedAt.toISOString()}; it was applied then and is not applied again.`,
        report: { alreadyApplied: true, previousRunId: previous.id },
      },
      transaction,
    );

  const run = await IngestRun.create({ ...base, status: 'running', report: { runKey: key, holder: PROCESS_HOLDER } });
  try {
    if (contentHash) {
      const previous = await previousApplication(series.id, contentHash);
      if (previous) return await alreadyApplied(run, previous);
    }
    if (series.retiredAt) {
      return await finish(run, { status: 'rejected', message: 'The series is retired; restore it before sending data.', report: { fileError: 'retired' } });
    }
    let rows: CollectedRows;
    try {
      rows = await collect(request);
    } catch (error) {
      if (!isFileError(error)) throw error;
      return await finish(run, { status: 'rejected', message: error.message, report: { fileError: error.code } });
    }
    const timeFormat = timeReadingOf(rows, mappingFor(series, request.mapping).timeFormat);
    if (rows.t.length === 0) {
      const counts = { rowsRead: rows.rowsRead, accepted: 0, duplicates: rows.duplicatesInInput, replaced: 0, rejected: rows.rejectedCount };
      return await finish(run, {
        ...counts,
        status: 'rejected',
        rejectedRows: rows.rejectedRows,
        notes: rows.notes,
        message: summaryMessage(counts, rows.rejectedRows[0]?.reason),
        report: inputReport(rows, timeFormat, rows.rejectedRows, rows.rejectedCount),
      });
    }
    return await writeTransaction(async (transaction) => {
      if (contentHash) {
        // Checked again under the write lock: two processes given the same content at once apply it once.
        const previous = await previousApplication(series.id, contentHash, transaction);
        if (previous) return alreadyApplied(run, previous, transaction);
      }
      return storeCollected(transaction, series, rows, run, started, {
        source: request.source,
        fileName: request.fileName,
        actorId: request.actor?.id ?? null,
        tokenId: request.tokenId ?? null,
        timeFormat,
        reason: request.reason,
        duplicatePolicy: request.duplicatePolicy,
      });
    });
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    console.error(`[intake] run ${run.id} failed`, error);
    await run.reload().catch(() => undefined);
    return finish(run, {
      status: 'failed',
      message: `The intake failed before anything was stored: ${message}. Nothing from this run was stored.`,
      report: {},
    });
  }
}

/**
 * How many of the points written carry each flag (by its label), and, per flag, which test set it (`source` for the
 * file's own flag column, `none` where nothing judged the point): what the run report shows per series.
 */
function flagCountsOfWritten(quality: PointFlags, kind: Uint8Array, replace: boolean): Pick<IngestOutcome, 'flagged' | 'flaggedBy'> {
  const flagged: Record<string, number> = {};
  const flaggedBy: Record<string, Record<string, number>> = {};
  for (let i = 0; i < quality.flag.length; i++) {
    if (kind[i] === ROW_NEW || (replace && kind[i] === ROW_CONFLICT)) {
      const label = FLAG_LABELS[quality.flag[i] as QartodFlag];
      const setter = setterName(quality.setter[i]) ?? 'none';
      flagged[label] = (flagged[label] ?? 0) + 1;
      const bySetter = (flaggedBy[label] ??= {});
      bySetter[setter] = (bySetter[setter] ?? 0) + 1;
    }
  }
  return { flagged, flaggedBy };
}

function describeLayout(layout: CsvLayout | null) {
  if (!layout) return null;
  return { delimiter: layout.delimiter, header: layout.header, encoding: layout.encoding, bom: layout.bom };
}

/**
 * Marks runs left 'running' by a process that died as 'failed'. A live run holds its lease (renewed every 10 s);
 * when the lease can be taken, its holder is gone. `now` lets a caller look past the lease's remaining lifetime.
 */
export async function sweepStaleRuns(now = Date.now()): Promise<number[]> {
  await db();
  const stale = await IngestRun.findAll({ where: { status: 'running', startedAt: { [Op.lt]: new Date(now - 1000) } } });
  const holder = `sweep:${PROCESS_HOLDER}`;
  const swept: number[] = [];
  for (const run of stale) {
    const key = typeof run.report?.runKey === 'string' ? run.report.runKey : null;
    if (!key || !(await acquireLease(runLease(key), 1000, holder, now))) continue;
    try {
      await run.update({
        status: 'failed',
        finishedAt: new Date(),
        durationMs: now - run.startedAt.getTime(),
        message:
          'The process taking in this data stopped before finishing; nothing from this run was stored. A dropped file is taken in again on the next pass.',
      });
      swept.push(run.id);
    } finally {
      await releaseLease(runLease(key), holder);
    }
  }
  return swept;
}

export interface PreviewRow {
  line: number;
  fields: string[];
}

export interface IntakePreview {
  layout: (NonNullable<ReturnType<typeof describeLayout>> & { delimiterDetected: boolean; fieldCount: number }) | null;
  /** a netCDF file: its format, the variable read and the others it offers, its time units; null for a CSV */
  netcdf: NetcdfLayout | null;
  timeFormatGuess: TimeFormat | null;
  mapping: IntakeMapping;
  sample: PreviewRow[];
  summary: PreviewSummary | null;
  /** `variables`: a netCDF file's data variables, when the problem is which one to read */
  fileError: { code: string; message: string; variables?: string[] } | null;
}

const PREVIEW_ROWS = 20;

/**
 * What committing this file would do, with nothing stored: for a CSV the detected layout, the first rows as read, a
 * guess of the time format, and the full validation and comparison summary under the given (or guessed) mapping;
 * for a netCDF file (told by its first bytes) its format, the variable read and the others on offer, the first
 * rows as decoded, and the same summary.
 */
export async function previewObservations(
  series: Series,
  csv: string | Uint8Array,
  overrides: Partial<IntakeMapping> = {},
  duplicatePolicy: DuplicatePolicy | null = null,
): Promise<IntakePreview> {
  await db();
  const netcdf = netcdfBytes(csv);
  if (netcdf) return previewNetcdf(series, netcdf, overrides, duplicatePolicy);
  const sample: PreviewRow[] = [];
  let layout: CsvLayout | null = null;
  const timeIndex = typeof overrides.timeColumn === 'number' ? overrides.timeColumn : 0;
  try {
    const head = await readCsv(csv.slice(0, 65_536), {
      delimiter: overrides.delimiter,
      header: overrides.header ?? 'auto',
      looksLikeData: (fields) => fields.slice(1).some((f) => /^\s*[+-]?(\d|\.\d)/.test(f)),
      onRow: (fields, line) => {
        if (sample.length < PREVIEW_ROWS) sample.push({ line, fields });
      },
    });
    layout = head.layout;
  } catch (error) {
    if (!(error instanceof CsvFileError)) throw error;
    if (error.code !== 'header-only' && error.code !== 'no-data') {
      return {
        layout: null,
        netcdf: null,
        timeFormatGuess: null,
        mapping: mappingFor(series, overrides),
        sample,
        summary: null,
        fileError: { code: error.code, message: error.message },
      };
    }
  }
  const column =
    typeof overrides.timeColumn === 'string' && layout?.header
      ? layout.header.findIndex((h) => h.toLowerCase() === String(overrides.timeColumn).toLowerCase())
      : timeIndex;
  const timeFormatGuess = guessTimeFormat(sample.map((row) => row.fields[column] ?? ''));
  const mapping = mappingFor(series, {
    ...overrides,
    timeFormat: overrides.timeFormat ?? timeFormatGuess ?? undefined,
    header: overrides.header ?? (layout?.header ? true : undefined),
  });
  const described = layout ? { ...describeLayout(layout)!, delimiterDetected: layout.delimiterDetected, fieldCount: layout.fieldCount } : null;
  let rows: CollectedRows;
  try {
    rows = await collectCsvRows(csv, mapping, series.timeZone);
  } catch (error) {
    if (!(error instanceof CsvFileError)) throw error;
    return { layout: described, netcdf: null, timeFormatGuess, mapping, sample, summary: null, fileError: { code: error.code, message: error.message } };
  }
  return { layout: described, netcdf: null, timeFormatGuess, mapping, sample, summary: await previewSummary(series, rows, duplicatePolicy), fileError: null };
}

async function previewNetcdf(
  series: Series,
  source: NetcdfSource,
  overrides: Partial<IntakeMapping>,
  duplicatePolicy: DuplicatePolicy | null,
): Promise<IntakePreview> {
  const mapping = mappingFor(series, overrides);
  const base = { layout: null, timeFormatGuess: null, mapping };
  let rows: CollectedRows;
  try {
    rows = await collectNetcdfRows(source, { variable: mapping.variable, flagVariable: mapping.flagVariable });
  } catch (error) {
    if (!(error instanceof NetcdfFileError)) throw error;
    return { ...base, netcdf: null, sample: [], summary: null, fileError: { code: error.code, message: error.message, variables: error.variables } };
  }
  const sample: PreviewRow[] = [];
  for (let i = 0; i < Math.min(PREVIEW_ROWS, rows.t.length); i++) {
    sample.push({
      line: rows.line[i],
      fields: [formatInstant(rows.t[i]), String(rows.value[i]), ...(rows.sourceFlag ? [String(rows.sourceFlag[i] || '')] : [])],
    });
  }
  return { ...base, netcdf: rows.netcdf ?? null, sample, summary: await previewSummary(series, rows, duplicatePolicy), fileError: null };
}

/** The validation and comparison summary of collected rows against what the series stores (replacing conflicts under `duplicatePolicy` or the series' own); nothing is written. */
async function previewSummary(series: Series, rows: CollectedRows, duplicatePolicy: DuplicatePolicy | null): Promise<PreviewSummary> {
  const classified = await readTransaction((transaction) => classifyAgainstStored(series.id, rows, transaction));
  let wouldAccept = 0;
  let duplicates = rows.duplicatesInInput;
  let conflicts = 0;
  for (const kind of classified.kind) {
    if (kind === ROW_NEW) wouldAccept++;
    else if (kind === ROW_DUPLICATE) duplicates++;
    else if (kind === ROW_CONFLICT) conflicts++;
  }
  const replace = replacesStored(series, duplicatePolicy);
  const conflictRows = replace ? [] : conflictRejections(rows, classified);
  return {
    rowsRead: rows.rowsRead,
    wouldAccept,
    wouldBeDuplicates: duplicates,
    wouldReplace: replace ? conflicts : 0,
    conflicts: replace ? 0 : conflicts,
    rejected: rows.rejectedCount + conflictRows.length,
    rejectedRows: [...rows.rejectedRows, ...conflictRows].sort((a, b) => a.line - b.line).slice(0, 200),
    first: rows.t.length ? rows.t[0] : null,
    last: rows.t.length ? rows.t[rows.t.length - 1] : null,
    notes: rows.notes,
  };
}
