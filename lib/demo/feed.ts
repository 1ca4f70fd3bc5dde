import fs from 'node:fs';
import path from 'node:path';
import { AnalysisSnapshot, AppState, IngestToken, Observation, Series, db, writeTransaction } from '@/models';
import { RandomStream } from '@/lib/engine/random';
import { config, dropDir } from '@/lib/runtime/config';
import { readAppState } from '@/lib/db/app-state';
import { observationExtent } from '@/lib/analysis/observations';
import { issueIngestToken } from '@/lib/intake/tokens';
import { DEMO_FEED_MODELS, DEMO_SEED, demoRecordEnd, type DemoDelivery, type DemoFeedModel } from './scenario';
import { demoSeeded } from './seed';

/**
 * The live demo feed: every cycle (DEMO_FEED_CRON), each demo station hands over the samples of its model that have
 * come due, the way real stations do — CSV files into its drop folder, a push to the API with an ingest token, or,
 * for one intermittent logger, nothing for a stretch and then everything it held.
 *
 * Stateless by design: a series' continuation starts from its stored record (first instant, last instant and last
 * value), and sample i always draws from the same stream, so the same record and clock give the same points. A
 * restart continues where the record ends; points that could not be delivered (web server not up yet, a file not
 * yet taken in) are simply made again, identical, on a later cycle — never repeated, never skipped.
 *
 * Time: every point sits on its series' grid at a real UTC instant no later than now. While a station is behind
 * (the seeded records end DEMO_BACKLOG_SAMPLES intervals back, or the scheduler was stopped), it catches up one
 * sample per cycle: demo time then runs one sampling interval per cycle — with the 2-minute default, 720 times the
 * clock for daily series; once caught up it runs with the clock. The intermittent logger sends its whole backlog
 * at once when it comes back.
 */

/** The intermittent logger is silent for the last `silent` samples of every `every` (4 h of every 36 h for an hourly one). */
export const SILENCE = { every: 36, silent: 4 } as const;

/** Name prefix of the feed's drop files; a file with it still in the folder means the last delivery is not in yet. */
const FILE_PREFIX = 'demo-feed-';
/** app_state key of the demo push station's token (see pushToken). */
const TOKEN_KEY = 'demo-feed.push-token';
const PUSH_TIMEOUT_MS = 15_000;

/** Where a stored record ends: its first instant (sample 0), its last instant and the value there. */
export interface RecordEnd {
  start: number;
  lastT: number;
  lastValue: number;
}

export interface FeedPoint {
  t: number;
  value: number;
}

/** True when sample `index` of the intermittent logger falls in one of its silent stretches. O(1). */
export function silentAt(index: number): boolean {
  return index % SILENCE.every >= SILENCE.every - SILENCE.silent;
}

/**
 * Sample i of a demo series draws from stream position·2³² + i of DEMO_SEED: its own, whatever the cycle that makes
 * it, and apart from the record's streams (position, high word 0).
 */
function sampleStream(model: DemoFeedModel, index: number): RandomStream {
  return new RandomStream(DEMO_SEED, model.position * 4_294_967_296 + index);
}

/**
 * The points a station hands over at `now` (UTC ms), continuing its stored record: the samples on the series' grid
 * (start + i·interval) after the last stored one and not after now — one per cycle while behind, or for the
 * intermittent logger none while its newest due sample lies in a silent stretch and then all at once. `withheld`
 * counts the due samples it keeps back. Pure; cost O(points).
 */
export function pointsDue(model: DemoFeedModel, end: RecordEnd, now: number): { points: FeedPoint[]; withheld: number } {
  const last = Math.floor((end.lastT - end.start) / model.intervalMs);
  const newest = Math.floor((now - end.start) / model.intervalMs);
  if (newest <= last) return { points: [], withheld: 0 };
  if (model.delivery === 'intermittent' && silentAt(newest)) return { points: [], withheld: newest - last };
  const upTo = model.delivery === 'intermittent' ? newest : last + 1;
  const points: FeedPoint[] = [];
  let previous = end.lastValue;
  for (let i = last + 1; i <= upTo; i++) {
    previous = model.next(previous, i, sampleStream(model, i), end.start);
    points.push({ t: end.start + i * model.intervalMs, value: previous });
  }
  return { points, withheld: 0 };
}

/** The points as a logger's CSV: a header, then ISO 8601 UTC instants and values written to round-trip exactly. */
export function feedCsv(points: FeedPoint[]): string {
  return `time,value\n${points.map((p) => `${new Date(p.t).toISOString()},${p.value}`).join('\n')}\n`;
}

/** The feed's file name for a delivery: its first instant in ISO 8601 basic format, e.g. demo-feed-20310515T000000Z.csv. */
function feedFileName(points: FeedPoint[]): string {
  return `${FILE_PREFIX}${new Date(points[0].t)
    .toISOString()
    .replace(/[-:]/g, '')
    .replace(/\.\d+Z$/, 'Z')}.csv`;
}

/**
 * Writes a delivery into a drop folder the way careful writers do: complete under a hidden temporary name (the
 * intake skips names starting with a dot), then renamed into place in one step, so the intake never sees half a
 * file. Returns the final path.
 */
export function writeDropFile(folder: string, points: FeedPoint[]): string {
  fs.mkdirSync(folder, { recursive: true });
  const name = feedFileName(points);
  const temporary = path.join(folder, `.${name}.part`);
  fs.writeFileSync(temporary, feedCsv(points));
  fs.renameSync(temporary, path.join(folder, name));
  return path.join(folder, name);
}

/** Whether a delivery of the feed still waits in the folder (not yet taken in by the ingest job). */
function deliveryWaiting(folder: string): boolean {
  return fs.existsSync(folder) && fs.readdirSync(folder).some((name) => name.startsWith(FILE_PREFIX) && name.endsWith('.csv'));
}

/**
 * The web server on loopback, where the push station sends: HOST as bound (the unspecified addresses mean every
 * interface, so loopback too) and PORT.
 */
export function loopbackAppUrl(): string {
  const { HOST, PORT } = config();
  const host = HOST === '0.0.0.0' || HOST === '' ? '127.0.0.1' : HOST === '::' ? '::1' : HOST;
  return `http://${host.includes(':') ? `[${host}]` : host}:${PORT}`;
}

let revocationLogged = false;

/**
 * The push station's ingest token, issued on first use and kept in app_state (the token must be sent, so its
 * secret is kept, unlike the digest-only tokens people are shown once; it grants writing synthetic points to one
 * demo series, less than access to the database it sits in already gives). Null once a lead revoked it: the
 * station then stops pushing rather than letting itself back in.
 */
async function pushToken(series: Series): Promise<string | null> {
  const saved = await readAppState(TOKEN_KEY);
  if (saved) {
    const { id, token } = JSON.parse(saved.value) as { id: number; token: string };
    const row = await IngestToken.findByPk(id);
    if (row && !row.revokedAt && row.seriesId === series.id) return token;
    if (!revocationLogged) log(`${series.slug}: the demo station's push token was revoked or removed; the station stays silent`);
    revocationLogged = true;
    return null;
  }
  return writeTransaction(async (transaction) => {
    const { id, token } = await issueIngestToken(series.id, 'Demo station uplink', null, transaction);
    await AppState.upsert({ key: TOKEN_KEY, value: JSON.stringify({ id, token }), updatedAt: new Date() }, { transaction });
    return token;
  });
}

export type FeedOutcome =
  | 'written' // a file was renamed into the drop folder
  | 'sent' // the push API stored the points
  | 'waiting' // the last file is not taken in yet
  | 'unanalysed' // the last delivery is taken in but not analysed yet (the seeded record does not count)
  | 'silent' // the intermittent logger holds its points back
  | 'up-to-date' // nothing due yet
  | 'unreachable' // the web server did not answer; the same points go next cycle
  | 'refused' // the push API said no (token revoked, bad points): logged
  | 'not-there'; // the series is gone, retired or empty

export interface FeedReport {
  slug: string;
  delivery: DemoDelivery;
  outcome: FeedOutcome;
  points: FeedPoint[];
  withheld: number;
}

function log(line: string): void {
  console.log(`[demo-feed ${new Date().toISOString()}] ${line}`);
}

async function push(slug: string, points: FeedPoint[], token: string, baseUrl: string): Promise<FeedOutcome> {
  let response: Response;
  try {
    response = await fetch(`${baseUrl}/api/series/${encodeURIComponent(slug)}/observations`, {
      method: 'POST',
      headers: { authorization: `Bearer ${token}`, 'content-type': 'application/json' },
      body: JSON.stringify(points.map((p) => ({ time: new Date(p.t).toISOString(), value: p.value }))),
      signal: AbortSignal.timeout(PUSH_TIMEOUT_MS),
    });
  } catch (error) {
    log(`${slug}: the web server at ${baseUrl} did not answer (${error instanceof Error ? error.message : error}); the points go next cycle`);
    return 'unreachable';
  }
  if (response.ok) return 'sent';
  const answer = await response.text().catch(() => '');
  if (response.status >= 500) {
    log(`${slug}: the push API answered ${response.status}; the points go next cycle`);
    return 'unreachable';
  }
  log(`${slug}: the push API refused the points (${response.status}): ${answer.slice(0, 300)}`);
  return 'refused';
}

/** The last instant the series' latest analysis saw, or the seeded record's end before any analysis. */
async function analysedUpTo(series: Series): Promise<number> {
  const latest = await AnalysisSnapshot.findOne({ where: { seriesId: series.id }, order: [['id', 'DESC']], attributes: ['dataTo'] });
  return latest?.dataTo != null ? Number(latest.dataTo) : demoRecordEnd(series.createdAt, Number(series.intervalMs));
}

async function feedSeries(model: DemoFeedModel, now: number, baseUrl: string): Promise<FeedReport> {
  const report = (outcome: FeedOutcome, points: FeedPoint[] = [], withheld = 0): FeedReport => ({
    slug: model.slug,
    delivery: model.delivery,
    outcome,
    points,
    withheld,
  });
  const series = await Series.findOne({ where: { slug: model.slug } });
  if (!series || series.retiredAt) return report('not-there');
  const extent = await observationExtent(series.id);
  if (extent.first === null || extent.last === null) return report('not-there');
  // Demo time runs ahead of the clock while a station catches up; holding the next delivery until the last one is
  // analysed keeps one analysis (and one rule judgement) per delivered sample, however slow the scheduler is, as a
  // real station's pace would. The seeded record itself does not hold the first delivery.
  if (series.needsAnalysis && extent.last > (await analysedUpTo(series))) return report('unanalysed');
  const folder = path.join(dropDir(), model.slug);
  if (model.delivery !== 'push' && deliveryWaiting(folder)) return report('waiting');
  const last = await Observation.findOne({ where: { seriesId: series.id, t: extent.last }, attributes: ['value'] });
  const { points, withheld } = pointsDue(model, { start: extent.first, lastT: extent.last, lastValue: last!.value }, now);
  if (!points.length) return report(withheld ? 'silent' : 'up-to-date', [], withheld);
  if (model.delivery !== 'push') {
    // The intake refused this very delivery before (e.g. a lead changed the series' CSV mapping): sending it again
    // every cycle would only pile up rejected files, so the station waits until someone looks.
    if (fs.existsSync(path.join(folder, 'rejected', feedFileName(points)))) return report('refused', points);
    const file = writeDropFile(folder, points);
    log(`${model.slug}: ${points.length} point(s) written to ${path.basename(file)}`);
    return report('written', points);
  }
  const token = await pushToken(series);
  if (token === null) return report('refused', points);
  const outcome = await push(model.slug, points, token, baseUrl);
  if (outcome === 'sent') log(`${model.slug}: ${points.length} point(s) pushed`);
  return report(outcome, points);
}

/**
 * One cycle of the demo feed, when the installation was seeded with the demo and SEED_DEMO is not 0: each demo
 * series' due points, delivered its way (see pointsDue). `now` and `baseUrl` are for tests. Cost O(series + points)
 * plus one push request.
 */
export async function runDemoFeed(options: { now?: number; baseUrl?: string } = {}): Promise<FeedReport[]> {
  if (!config().SEED_DEMO) return [];
  await db();
  if (!(await demoSeeded())) return [];
  const now = options.now ?? Date.now();
  const baseUrl = options.baseUrl ?? loopbackAppUrl();
  const reports: FeedReport[] = [];
  for (const model of DEMO_FEED_MODELS) reports.push(await feedSeries(model, now, baseUrl));
  return reports;
}
