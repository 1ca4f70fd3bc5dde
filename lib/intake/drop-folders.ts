import fs from 'node:fs';
import path from 'node:path';
import { Feed, Series, db } from '@/models';
import { ingestFeedFile, type FeedOutcome } from '@/lib/feeds/intake';
import { dropDir } from '@/lib/runtime/config';
import { withLease } from '@/lib/db/leases';
import { slugSchema } from '@/lib/schemas/series';
import { hashFile } from './content-hash';
import { hasNetcdfExtension, netcdfFile, type NetcdfSource } from './netcdf/format';
import { ingestObservations, sweepStaleRuns, type IngestOutcome } from './pipeline';

/** Long enough for a million-row file; renewed every third of it while the file is worked on. */
const FILE_LEASE_MS = 60_000;

function log(line: string): void {
  console.log(`[intake ${new Date().toISOString()}] ${line}`);
}

/**
 * Regular `*.csv` and netCDF (`*.nc`, `*.nc4`, `*.cdf`, `*.netcdf`) files of a folder (symlinks and `.part` files are
 * not; names come from readdir only). The name only picks the files: their first bytes decide how they are read.
 */
function intakeFilesIn(folder: string): string[] {
  return fs
    .readdirSync(folder, { withFileTypes: true })
    .filter((entry) => entry.isFile() && !entry.name.startsWith('.') && (entry.name.toLowerCase().endsWith('.csv') || hasNetcdfExtension(entry.name)))
    .map((entry) => entry.name)
    .sort();
}

/** The folder of station feeds under the drop folder: `DROP_DIR/feeds/<feed-slug>/` (no series may be called so). */
export const FEEDS_FOLDER = 'feeds';

function subfolders(root: string): { slug: string; folder: string }[] {
  fs.mkdirSync(root, { recursive: true });
  return fs
    .readdirSync(root, { withFileTypes: true })
    .filter((entry) => entry.isDirectory())
    .map((entry) => ({ slug: entry.name, folder: path.join(root, entry.name) }));
}

function seriesFolders(): { slug: string; folder: string }[] {
  return subfolders(dropDir()).filter(({ slug }) => slug !== FEEDS_FOLDER);
}

function freeName(folder: string, name: string, runId: number): string {
  if (!fs.existsSync(path.join(folder, name)) && !fs.existsSync(path.join(folder, `${name}.report.json`))) return name;
  const ext = path.extname(name);
  return `${path.basename(name, ext)}.run-${runId}${ext}`;
}

export interface DropReport extends Omit<IngestOutcome, 'runId'> {
  runId: number;
  file: string;
  series: string;
  finishedAt: string;
}

/** A feed file's report: the feed's answer with each series' counts. */
export interface FeedDropReport extends FeedOutcome {
  file: string;
  finishedAt: string;
}

/** Moves a finished file beside its report: the report first, so a file in processed/ or rejected/ always has one. */
function settle(folder: string, name: string, rejected: boolean, runId: number, report: DropReport | FeedDropReport): string {
  const target = path.join(folder, rejected ? 'rejected' : 'processed');
  fs.mkdirSync(target, { recursive: true });
  const finalName = freeName(target, name, runId);
  const reportPath = path.join(target, `${finalName}.report.json`);
  fs.writeFileSync(`${reportPath}.tmp`, `${JSON.stringify(report, null, 2)}\n`);
  fs.renameSync(`${reportPath}.tmp`, reportPath);
  fs.renameSync(path.join(folder, name), path.join(target, finalName));
  return path.join(path.basename(target), finalName);
}

/** A dropped file as the intake takes it: a netCDF file by path (its readers open it), a CSV as a stream. */
function inputOf(file: string): { netcdf: NetcdfSource } | { csv: fs.ReadStream } {
  const netcdf = netcdfFile(file);
  return netcdf ? { netcdf } : { csv: fs.createReadStream(file) };
}

const unknownReported = new Set<string>();

/**
 * One pass over the drop folders. A file is taken only when complete: its size and modification time are the same
 * in two looks `settleMs` apart (writers that need longer write `name.csv.part` and rename it). Each file is worked
 * under a database lease so two schedulers never take the same file, and moved to processed/ or rejected/ only
 * after its transaction committed; a crash before the move leaves it in place, and the next pass recognises its
 * content hash and only moves it. Runs that failed (e.g. the database was busy) leave the file for the next pass.
 */
export async function runDropIntake(options: { settleMs?: number } = {}): Promise<{ file: string; status: string; movedTo: string | null }[]> {
  await db();
  await sweepStaleRuns();
  const known = new Map((await Series.findAll()).map((s) => [s.slug, s]));
  const feeds = new Map((await Feed.findAll()).map((f) => [f.slug, f]));
  const candidates: { slug: string; feed: boolean; folder: string; name: string; stat: fs.Stats }[] = [];
  const look = (folders: { slug: string; folder: string }[], registered: Map<string, unknown>, feed: boolean) => {
    for (const { slug, folder } of folders) {
      if (!slugSchema.safeParse(slug).success || !registered.has(slug)) {
        const what = feed ? `${FEEDS_FOLDER}/${slug}` : slug;
        if (!unknownReported.has(what)) log(`folder "${what}" matches no registered ${feed ? 'feed' : 'series'}; its files are left alone`);
        unknownReported.add(what);
        continue;
      }
      for (const name of intakeFilesIn(folder)) candidates.push({ slug, feed, folder, name, stat: fs.statSync(path.join(folder, name)) });
    }
  };
  look(seriesFolders(), known, false);
  look(subfolders(path.join(dropDir(), FEEDS_FOLDER)), feeds, true);
  if (candidates.length === 0) return [];
  await new Promise((resolve) => setTimeout(resolve, options.settleMs ?? 1000));
  const results: { file: string; status: string; movedTo: string | null }[] = [];
  for (const { slug, feed, folder, name, stat } of candidates) {
    const file = path.join(folder, name);
    const now = fs.statSync(file, { throwIfNoEntry: false });
    if (!now || now.size !== stat.size || now.mtimeMs !== stat.mtimeMs) continue;
    const where = feed ? `${FEEDS_FOLDER}/${slug}` : slug;
    const done = await withLease(`ingest:${where}/${name}`, FILE_LEASE_MS, async () => {
      // Another scheduler may have finished the file between our look and our lease.
      if (!fs.existsSync(file)) return null;
      const contentHash = await hashFile(file);
      const finishedAt = () => new Date().toISOString();
      let status: string;
      let message: string;
      let movedTo: string | null = null;
      if (feed) {
        const outcome = await ingestFeedFile({ feed: feeds.get(slug)!, source: 'drop', fileName: name, contentHash, ...inputOf(file) });
        ({ status, message } = outcome);
        if (status !== 'failed')
          movedTo = settle(folder, name, status === 'rejected', outcome.series[0]?.runId ?? 0, { file: name, ...outcome, finishedAt: finishedAt() });
      } else {
        const outcome = await ingestObservations({ series: known.get(slug)!, source: 'drop', fileName: name, contentHash, ...inputOf(file) });
        ({ status, message } = outcome);
        if (status !== 'failed')
          movedTo = settle(folder, name, status === 'rejected', outcome.runId, { file: name, series: slug, ...outcome, finishedAt: finishedAt() });
      }
      log(`${where}/${name}: ${status} — ${message}${movedTo ? ` → ${movedTo}` : ''}`);
      return { file: `${where}/${name}`, status, movedTo };
    });
    if (done) results.push(done);
  }
  return results;
}

export interface DropFolderListing {
  slug: string;
  known: boolean;
  pending: string[];
  rejected: { file: string; runId: number | null; message: string; rejected: number }[];
}

/** What the drop folders hold right now, for the intake screen: waiting files, rejected files with their reports, unknown folders. */
export async function listDropFolders(): Promise<DropFolderListing[]> {
  await db();
  const known = new Set((await Series.findAll({ attributes: ['slug'] })).map((s) => s.slug));
  return seriesFolders().map(({ slug, folder }) => {
    const rejectedDir = path.join(folder, 'rejected');
    const rejected = fs.existsSync(rejectedDir)
      ? intakeFilesIn(rejectedDir)
          .slice(-100)
          .reverse()
          .map((file) => {
            try {
              const report = JSON.parse(fs.readFileSync(path.join(rejectedDir, `${file}.report.json`), 'utf8')) as DropReport;
              return { file, runId: report.runId, message: report.message, rejected: report.rejected };
            } catch {
              return { file, runId: null, message: 'No report was found beside this file.', rejected: 0 };
            }
          })
      : [];
    return { slug, known: known.has(slug) && slugSchema.safeParse(slug).success, pending: intakeFilesIn(folder), rejected };
  });
}
