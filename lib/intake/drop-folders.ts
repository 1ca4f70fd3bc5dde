import fs from 'node:fs';
import path from 'node:path';
import { Series, db } from '@/models';
import { dropDir } from '@/lib/runtime/config';
import { withLease } from '@/lib/db/leases';
import { slugSchema } from '@/lib/schemas/series';
import { hashFile } from './content-hash';
import { ingestObservations, sweepStaleRuns, type IngestOutcome } from './pipeline';

/** Long enough for a million-row file; renewed every third of it while the file is worked on. */
const FILE_LEASE_MS = 60_000;

function log(line: string): void {
  console.log(`[intake ${new Date().toISOString()}] ${line}`);
}

/** Regular `*.csv` files of a folder (symlinks and `.part` files are not; names come from readdir only). */
function csvFilesIn(folder: string): string[] {
  return fs.readdirSync(folder, { withFileTypes: true })
    .filter((entry) => entry.isFile() && !entry.name.startsWith('.') && entry.name.toLowerCase().endsWith('.csv'))
    .map((entry) => entry.name)
    .sort();
}

function seriesFolders(): { slug: string; folder: string }[] {
  const root = dropDir();
  fs.mkdirSync(root, { recursive: true });
  return fs.readdirSync(root, { withFileTypes: true })
    .filter((entry) => entry.isDirectory())
    .map((entry) => ({ slug: entry.name, folder: path.join(root, entry.name) }));
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

/** Moves a finished file beside its report: the report first, so a file in processed/ or rejected/ always has one. */
function settle(folder: string, name: string, slug: string, outcome: IngestOutcome): string {
  const target = path.join(folder, outcome.status === 'rejected' ? 'rejected' : 'processed');
  fs.mkdirSync(target, { recursive: true });
  const finalName = freeName(target, name, outcome.runId);
  const report: DropReport = { file: name, series: slug, ...outcome, finishedAt: new Date().toISOString() };
  const reportPath = path.join(target, `${finalName}.report.json`);
  fs.writeFileSync(`${reportPath}.tmp`, `${JSON.stringify(report, null, 2)}\n`);
  fs.renameSync(`${reportPath}.tmp`, reportPath);
  fs.renameSync(path.join(folder, name), path.join(target, finalName));
  return path.join(path.basename(target), finalName);
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
  const candidates: { slug: string; folder: string; name: string; stat: fs.Stats }[] = [];
  for (const { slug, folder } of seriesFolders()) {
    if (!slugSchema.safeParse(slug).success || !known.has(slug)) {
      if (!unknownReported.has(slug)) log(`folder "${slug}" matches no registered series; its files are left alone`);
      unknownReported.add(slug);
      continue;
    }
    for (const name of csvFilesIn(folder)) candidates.push({ slug, folder, name, stat: fs.statSync(path.join(folder, name)) });
  }
  if (candidates.length === 0) return [];
  await new Promise((resolve) => setTimeout(resolve, options.settleMs ?? 1000));
  const results: { file: string; status: string; movedTo: string | null }[] = [];
  for (const { slug, folder, name, stat } of candidates) {
    const file = path.join(folder, name);
    const now = fs.statSync(file, { throwIfNoEntry: false });
    if (!now || now.size !== stat.size || now.mtimeMs !== stat.mtimeMs) continue;
    const done = await withLease(`ingest:${slug}/${name}`, FILE_LEASE_MS, async () => {
      // Another scheduler may have finished the file between our look and our lease.
      if (!fs.existsSync(file)) return null;
      const series = known.get(slug)!;
      const contentHash = await hashFile(file);
      const outcome = await ingestObservations({ series, source: 'drop', fileName: name, contentHash, csv: fs.createReadStream(file) });
      const movedTo = outcome.status === 'failed' ? null : settle(folder, name, slug, outcome);
      log(`${slug}/${name}: ${outcome.status} — ${outcome.message}${movedTo ? ` → ${movedTo}` : ''}`);
      return { file: `${slug}/${name}`, status: outcome.status, movedTo };
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
      ? csvFilesIn(rejectedDir).slice(-100).reverse().map((file) => {
        try {
          const report = JSON.parse(fs.readFileSync(path.join(rejectedDir, `${file}.report.json`), 'utf8')) as DropReport;
          return { file, runId: report.runId, message: report.message, rejected: report.rejected };
        } catch {
          return { file, runId: null, message: 'No report was found beside this file.', rejected: 0 };
        }
      })
      : [];
    return { slug, known: known.has(slug) && slugSchema.safeParse(slug).success, pending: csvFilesIn(folder), rejected };
  });
}
