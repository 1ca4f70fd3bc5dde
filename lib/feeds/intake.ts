import type { Transaction } from 'sequelize';
import { IngestRun, Mark, Series, writeTransaction, type Feed } from '@/models';
import type { IngestSource } from '@/models/IngestRun';
import { PROCESS_HOLDER } from '@/lib/db/leases';
import type { CsvInput } from '@/lib/intake/csv';
import { netcdfBytes, type NetcdfSource } from '@/lib/intake/netcdf/format';
import { collectNetcdfColumns } from '@/lib/intake/netcdf/read';
import { collectCsvColumns, type CollectedRows } from '@/lib/intake/rows';
import {
  finishRun,
  inputReport,
  isFileError,
  previousApplication,
  storeCollected,
  summaryMessage,
  timeReadingOf,
  underNewRunLease,
  type DuplicatePolicy,
  type IngestOutcome,
} from '@/lib/intake/pipeline';
import { parseTime, type TimeFormat } from '@/lib/intake/time-formats';
import { addMark } from '@/lib/marks/write';

export interface FeedSeriesOutcome extends IngestOutcome {
  series: string;
  column: string;
}

export interface FeedOutcome {
  feed: string;
  /** succeeded: the file's rows were stored (all series in one transaction); rejected: nothing usable; failed: nothing stored, try again */
  status: 'succeeded' | 'rejected' | 'failed';
  alreadyApplied: boolean;
  message: string;
  /** one entry per series the feed maps, with its own run and counts */
  series: FeedSeriesOutcome[];
  /** maintenance marks the file's maintenance column added (per series; marks already there are not added again) */
  marksAdded: number;
  durationMs: number;
}

export interface FeedIngestRequest {
  feed: Feed;
  source: IngestSource;
  /** the station file: CSV text, bytes or a stream; bytes with a netCDF signature are read as netCDF */
  csv?: CsvInput;
  /** a netCDF station file by path (a drop folder's), read instead of `csv` */
  netcdf?: NetcdfSource;
  fileName?: string | null;
  contentHash?: string | null;
  actor?: { id: number } | null;
  /** why the file was sent (a reprocessing note), kept with each series' data version */
  reason?: string | null;
  /** the file's duplicate policy instead of each series' own (a reprocessing upload) */
  duplicatePolicy?: DuplicatePolicy | null;
}

/**
 * Takes in one station file through a feed: read once, one set of validated rows per mapped column (with its flag
 * column), then every series written inside ONE transaction, so the file lands whole or not at all; each series
 * gets its own ingest run (the series' history shows it) and the answer lists each series' counts. Rows are judged
 * per series as any intake judges them (a reading missing from one column is reported there, the others keep it).
 * A file-level problem (missing column, binary data, wrong delimiter) rejects the file for every series. The same
 * content is applied once: when every series already took it, nothing is applied again.
 */
export async function ingestFeedFile(request: FeedIngestRequest): Promise<FeedOutcome> {
  return underNewRunLease((key, started) => ingestUnderLease(request, key, started));
}

async function ingestUnderLease(request: FeedIngestRequest, key: string, started: number): Promise<FeedOutcome> {
  const { feed, contentHash = null } = request;
  const mapped = Object.entries(feed.columns);
  const bySlug = new Map((await Series.findAll({ where: { slug: mapped.map(([, slug]) => slug) } })).map((s) => [s.slug, s]));
  let marksAdded = 0;
  const done = (status: FeedOutcome['status'], message: string, series: FeedSeriesOutcome[], alreadyApplied = false): FeedOutcome => ({
    feed: feed.slug,
    status,
    alreadyApplied,
    message,
    series,
    marksAdded,
    durationMs: Date.now() - started,
  });
  const unusable = mapped.filter(([, slug]) => !bySlug.get(slug) || bySlug.get(slug)!.retiredAt);
  if (unusable.length) {
    return done('rejected', `The feed maps to series that are missing or retired (${unusable.map(([, slug]) => slug).join(', ')}); nothing was stored.`, []);
  }
  const targets = mapped.map(([column, slug]) => ({ column, series: bySlug.get(slug)! }));
  const runs = await Promise.all(
    targets.map(({ series, column }) =>
      IngestRun.create({
        seriesId: series.id,
        source: request.source,
        fileName: request.fileName ?? null,
        contentHash,
        userId: request.actor?.id ?? null,
        tokenId: null,
        startedAt: new Date(started),
        status: 'running',
        report: { runKey: key, holder: PROCESS_HOLDER, feed: feed.slug, column },
      }),
    ),
  );
  const label = (outcomes: IngestOutcome[]) => outcomes.map((o, k) => ({ ...o, series: targets[k].series.slug, column: targets[k].column }));
  const finishAll = async (fields: Parameters<typeof finishRun>[2]) => label(await Promise.all(runs.map((run) => finishRun(run, started, fields))));
  try {
    if (contentHash) {
      const previous = await Promise.all(targets.map(({ series }) => previousApplication(series.id, contentHash)));
      if (previous.every(Boolean)) {
        const message = `Same content as run #${previous[0]!.id}; it was applied then and is not applied again.`;
        return done('succeeded', message, await finishAll({ status: 'succeeded', alreadyApplied: true, message, report: { alreadyApplied: true } }), true);
      }
    }
    let collected: CollectedRows[];
    // Maintenance visits and sensor events by instant; a time that does not read is reported with the rows already.
    const events = new Map<number, string>();
    const zone = targets[0].series.timeZone;
    const netcdf = request.netcdf ?? netcdfBytes(request.csv);
    try {
      collected = netcdf
        ? await collectNetcdfFeed(netcdf, feed, targets)
        : await collectCsvColumns(request.csv ?? '', {
            timeColumn: feed.timeColumn,
            timeFormat: feed.timeFormat as TimeFormat,
            header: true,
            values: targets.map(({ column, series }) => ({ valueColumn: column, flagColumn: flagColumnOf(feed, column), zone: series.timeZone })),
            eventColumn: feed.maintenanceColumn ?? undefined,
            onEvent: (timeCell, note) => {
              const time = parseTime(timeCell, feed.timeFormat as TimeFormat, zone);
              if (time.ok && Number.isInteger(time.t)) events.set(time.t, note.slice(0, 2000));
            },
          });
    } catch (error) {
      if (!isFileError(error)) throw error;
      return done('rejected', error.message, await finishAll({ status: 'rejected', message: error.message, report: { fileError: error.code } }));
    }
    if (collected.every((rows) => rows.t.length === 0)) {
      const outcomes = await Promise.all(runs.map((run, k) => rejectedRun(run, collected[k], started, timeReadingOf(collected[k], feed.timeFormat))));
      return done('rejected', `Nothing stored: no column had a usable row (first: ${collected[0].rejectedRows[0]?.reason ?? 'no rows'}).`, label(outcomes));
    }
    const outcomes = await writeTransaction(async (transaction) => {
      const results: IngestOutcome[] = [];
      for (let k = 0; k < targets.length; k++) {
        const rows = collected[k];
        if (rows.t.length === 0) {
          results.push(await rejectedRun(runs[k], rows, started, timeReadingOf(rows, feed.timeFormat), transaction));
          continue;
        }
        results.push(
          await storeCollected(transaction, targets[k].series, rows, runs[k], started, {
            source: request.source,
            fileName: request.fileName,
            actorId: request.actor?.id ?? null,
            tokenId: null,
            timeFormat: timeReadingOf(rows, feed.timeFormat),
            reason: request.reason,
            duplicatePolicy: request.duplicatePolicy,
          }),
        );
      }
      marksAdded = await markEvents(
        transaction,
        targets.map((t) => t.series.id),
        events,
        request.actor ?? null,
      );
      return results;
    });
    const stored = outcomes.reduce((sum, o) => sum + o.accepted + o.replaced, 0);
    const marked = marksAdded ? ` Marked ${marksAdded} maintenance break${marksAdded === 1 ? '' : 's'}.` : '';
    return done(
      'succeeded',
      `Stored ${stored.toLocaleString('en-US')} new or replaced points in ${targets.length} series: ${outcomes.map((o, k) => `${targets[k].series.slug} ${o.accepted}`).join(', ')}.${marked}`,
      label(outcomes),
    );
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error);
    console.error(`[intake] feed ${feed.slug} failed`, error);
    await Promise.all(runs.map((run) => run.reload().catch(() => undefined)));
    const text = `The intake failed before anything was stored: ${message}. Nothing from this file was stored.`;
    return done('failed', text, await finishAll({ status: 'failed', message: text, report: {} }));
  }
}

/**
 * Each maintenance visit or sensor event of the file becomes a maintenance mark on every series of the feed (the
 * analysed stretch starts after the latest), unless that series already has one at that instant. Returns how many.
 */
async function markEvents(transaction: Transaction, seriesIds: number[], events: Map<number, string>, actor: { id: number } | null): Promise<number> {
  let added = 0;
  for (const seriesId of seriesIds) {
    for (const [at, note] of events) {
      if (await Mark.findOne({ where: { seriesId, at, kind: 'maintenance' }, transaction })) continue;
      await addMark(transaction, seriesId, { at, note, kind: 'maintenance' }, actor);
      added++;
    }
  }
  return added;
}

/**
 * A netCDF station file through a feed: each mapped column names a variable, `flagColumns` its flag variable (by
 * default the one its ancillary_variables name); times come from the file's CF time coordinate, so the feed's time
 * column and format are not used, nor its maintenance column (notes on that are added to each series' report).
 */
async function collectNetcdfFeed(source: NetcdfSource, feed: Feed, targets: { column: string }[]): Promise<CollectedRows[]> {
  const collected = await collectNetcdfColumns(
    source,
    targets.map(({ column }) => ({ variable: column, flagVariable: flagColumnOf(feed, column) })),
  );
  if (feed.maintenanceColumn) {
    for (const rows of collected)
      rows.notes.push(`The feed's maintenance column "${feed.maintenanceColumn}" is read from CSV files only; this netCDF file marked no maintenance.`);
  }
  return collected;
}

function flagColumnOf(feed: Feed, column: string): string | undefined {
  const entry = Object.entries(feed.flagColumns).find(([valueColumn]) => valueColumn.toLowerCase() === column.toLowerCase());
  return entry?.[1];
}

function rejectedRun(
  run: IngestRun,
  rows: CollectedRows,
  started: number,
  timeFormat: string,
  transaction?: Parameters<typeof finishRun>[3],
): Promise<IngestOutcome> {
  const counts = { rowsRead: rows.rowsRead, accepted: 0, duplicates: rows.duplicatesInInput, replaced: 0, rejected: rows.rejectedCount };
  return finishRun(
    run,
    started,
    {
      ...counts,
      status: 'rejected',
      rejectedRows: rows.rejectedRows,
      notes: rows.notes,
      message: summaryMessage(counts, rows.rejectedRows[0]?.reason),
      report: inputReport(rows, timeFormat, rows.rejectedRows, rows.rejectedCount),
    },
    transaction,
  );
}
