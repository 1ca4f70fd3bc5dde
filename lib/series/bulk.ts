import Papa from 'papaparse';
import { Op, UniqueConstraintError } from 'sequelize';
import { Series, Site, db, writeTransaction } from '@/models';
import { recordAudit } from '@/lib/audit';
import { ConflictError, UnprocessableError } from '@/lib/http/errors';
import { zodFieldErrors } from '@/lib/http/handler';
import type { Actor } from '@/lib/auth/roles';
import { BULK_COLUMNS, bulkRowSchema, type SeriesCreate } from '@/lib/schemas/series';
import { insertSeries } from './registry';

/** More rows than a programme registers at once; a longer list is split by whoever writes it. */
export const BULK_MAX_ROWS = 2000;

export interface BulkRowReport {
  /** 1-based number of the data row (the header is row 0) */
  row: number;
  slug: string;
  name: string;
  site: string;
  /** messages by field ('_' for the row as a whole); empty when the row can be created */
  errors: Record<string, string[]>;
}

export interface BulkReport {
  /** problems with the list as a whole (header, size); when any, no row is judged */
  listErrors: string[];
  rows: BulkRowReport[];
  /** names of sites that creating the list would add */
  newSites: string[];
  valid: boolean;
  created: number;
}

const KNOWN = new Set(Object.keys(BULK_COLUMNS));

function listFailure(listErrors: string[]): BulkReport {
  return { listErrors, rows: [], newSites: [], valid: false, created: 0 };
}

/**
 * Reads and checks a bulk list without writing: header (known columns, slug and name present), then each row with
 * `bulkRowSchema` (the checks of `POST /api/series`), slugs repeated inside the list (every use after the first) and
 * slugs already registered. O(rows) plus two indexed queries.
 */
export async function checkBulkList(csv: string): Promise<{ report: BulkReport; valid: SeriesCreate[] }> {
  const parsed = Papa.parse<Record<string, string>>(csv.replace(/^\uFEFF/, ''), { header: true, skipEmptyLines: 'greedy', transformHeader: (h) => h.trim() });
  const header = parsed.meta.fields ?? [];
  const unknown = header.filter((column) => !KNOWN.has(column));
  const missing = ['slug', 'name'].filter((column) => !header.includes(column));
  const listErrors = [
    ...(unknown.length ? [`Unknown columns: ${unknown.join(', ')}. Known: ${[...KNOWN].join(', ')}.`] : []),
    ...(missing.length ? [`Missing columns: ${missing.join(', ')}.`] : []),
    ...(parsed.data.length === 0 ? ['The list has no rows.'] : []),
    ...(parsed.data.length > BULK_MAX_ROWS ? [`The list has ${parsed.data.length} rows; register at most ${BULK_MAX_ROWS} at once.`] : []),
  ];
  if (listErrors.length) return { report: listFailure(listErrors), valid: [] };

  const rows: BulkRowReport[] = [];
  const valid: SeriesCreate[] = [];
  const firstRowOfSlug = new Map<string, number>();
  for (const [index, cells] of parsed.data.entries()) {
    const row = index + 1;
    const result = bulkRowSchema.safeParse(cells);
    const errors: Record<string, string[]> = result.success ? {} : zodFieldErrors(result.error);
    const slug = (cells.slug ?? '').trim();
    const earlier = firstRowOfSlug.get(slug);
    if (slug && earlier !== undefined) (errors.slug ??= []).push(`Also used in row ${earlier} of this list.`);
    else if (slug) firstRowOfSlug.set(slug, row);
    rows.push({ row, slug, name: (cells.name ?? '').trim(), site: (cells.site ?? '').trim(), errors });
    if (result.success) valid.push(result.data);
  }

  await db();
  const slugs = [...firstRowOfSlug.keys()];
  const [registered, knownSites] = await Promise.all([
    Series.findAll({ where: { slug: { [Op.in]: slugs } }, attributes: ['slug'] }),
    Site.findAll({ attributes: ['name'] }),
  ]);
  const taken = new Set(registered.map((series) => series.slug));
  for (const row of rows) if (taken.has(row.slug)) (row.errors.slug ??= []).push('A series with this slug is already registered.');
  const siteNames = new Set(knownSites.map((site) => site.name));
  const newSites = [...new Set(rows.map((row) => row.site).filter((name) => name && !siteNames.has(name)))].sort();
  const allValid = rows.every((row) => Object.keys(row.errors).length === 0);
  return { report: { listErrors: [], rows, newSites, valid: allValid, created: 0 }, valid: allValid ? valid : [] };
}

/**
 * Checks a bulk list and, unless `dryRun`, registers all of its series in one transaction (each as `POST
 * /api/series` would, with its default rules and settings history) or none: a list with any row error answers 422
 * with the per-row errors as fields (`<row>.<field>`), and a slug taken meanwhile rolls everything back (409).
 */
export async function registerBulk(csv: string, actor: Pick<Actor, 'id'>, options: { dryRun: boolean }): Promise<BulkReport> {
  const { report, valid } = await checkBulkList(csv);
  if (options.dryRun) return report;
  if (!report.valid) {
    const fields: Record<string, string[]> = Object.fromEntries(
      report.rows.flatMap((row) => Object.entries(row.errors).map(([field, messages]) => [`${row.row}.${field}`, messages])),
    );
    if (report.listErrors.length) fields._ = report.listErrors;
    throw new UnprocessableError('The list has errors; nothing was registered.', fields);
  }
  try {
    await writeTransaction(async (transaction) => {
      for (const fields of valid) await insertSeries(fields, actor, transaction);
      await recordAudit(
        { actorId: actor.id, action: 'series.bulk-create', entity: 'series', details: { count: valid.length, slugs: valid.map((f) => f.slug) } },
        transaction,
      );
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError)
      throw new ConflictError('A slug of the list was registered meanwhile; nothing was registered. Check the list again.');
    throw error;
  }
  return { ...report, created: valid.length };
}
