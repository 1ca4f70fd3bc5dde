import { z } from 'zod';
import { changeReasonSchema } from './change-reason';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { isExtent, parseExtent } from '@/lib/engine/extent';
import { qcConfigSchema } from './quality';

/** Lower-case words joined by hyphens: safe as a folder name and in URLs, never a path. */
export const slugSchema = z
  .string()
  .min(2)
  .max(64)
  .regex(/^[a-z0-9]+(?:-[a-z0-9]+)*$/, 'Use lower-case letters, digits and single hyphens (e.g. north-basin-temp).');

const SLUG_MAX = 64;

/** Latin letters that Unicode does not decompose into a base letter and a mark, written as they are usually spelt in ASCII. */
const LATIN_LETTERS: Record<string, string> = { æ: 'ae', ø: 'o', œ: 'oe', ß: 'ss', ł: 'l', đ: 'd', ð: 'd', þ: 'th', ı: 'i' };

/**
 * A slug suggested for a name: accents dropped (Unicode NFKD, combining marks removed; æ, ø, ß and the like
 * spelt out), lower case, every run of other characters one hyphen, at most 64 characters. '' when nothing of the
 * name is left (a name in another script); the form then asks for one. O(length).
 */
export function suggestSlug(name: string): string {
  return name
    .normalize('NFKD')
    .replace(/[\u0300-\u036f]/g, '')
    .toLowerCase()
    .replace(/[æøœßłđðþı]/g, (letter) => LATIN_LETTERS[letter])
    .replace(/[^a-z0-9]+/g, '-')
    .slice(0, SLUG_MAX)
    .replace(/^-+|-+$/g, '');
}

/** `suggestSlug(name)`, or `fallback` when that is too short, made unique against `taken` by -2, -3, … */
export function uniqueSlug(name: string, taken: ReadonlySet<string>, fallback = 'site'): string {
  const suggested = suggestSlug(name);
  const base = suggested.length >= 2 ? suggested : fallback;
  let slug = base;
  for (let n = 2; taken.has(slug); n++) slug = `${base.slice(0, SLUG_MAX - String(n).length - 1).replace(/-+$/, '')}-${n}`;
  return slug;
}

export const TIME_FORMATS = ['iso8601', 'date', 'epoch-seconds', 'epoch-milliseconds', 'decimal-year', 'age-years-bp', 'age-kyr-bp'] as const;

/** A netCDF variable name (the NUG allows letters, digits, underscores and more; anything past 256 characters is no name). */
export const netcdfVariableName = z.string().trim().min(1).max(256);

export const csvMappingSchema = z.object({
  timeColumn: z.union([z.string().min(1).max(200), z.number().int().min(0)]).default(0),
  valueColumn: z.union([z.string().min(1).max(200), z.number().int().min(0)]).default(1),
  timeFormat: z.enum(TIME_FORMATS).default('iso8601'),
  /** A column holding each value's QARTOD flag from the source (1, 2, 3, 4 or 9); optional. */
  flagColumn: z.union([z.string().min(1).max(200), z.number().int().min(0)]).optional(),
  /** The variable a netCDF file feeds the series from; optional when a file has only one data variable on its time dimension. */
  variable: netcdfVariableName.optional(),
  /** The QC flag variable of `variable` (CF flag_values/flag_meanings); by default the one its ancillary_variables name. */
  flagVariable: netcdfVariableName.optional(),
});

function isTimeZone(zone: string): boolean {
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone: zone });
    return true;
  } catch {
    return false;
  }
}

const text = (max: number) => z.string().trim().max(max);

/** An IANA time zone name the runtime knows (Intl), as series and sites carry. */
export const timeZoneSchema = z.string().refine(isTimeZone, 'Unknown IANA time zone (e.g. Europe/Oslo or UTC).');

/**
 * Analysis settings a new series starts with, suited to a live record that grows with every reading (the engine's
 * and command line's own defaults stay those of a one-off analysis of a finished record):
 * - `span: "1000 points"`: the live analysis judges the latest 1,000 sampling intervals at most, so the window
 *   stops growing with the record (a fraction of the whole record would judge a ten-year record on five-year
 *   windows); 1,000 points leave a window of 500 and about 500 window positions for the Kendall trend.
 * - `window: 0.5`, `bandwidth: 0.1`: fractions of the analysed stretch (the span, or less after a shift or mark).
 * - `surrogates: 199`: a surrogate p is at least 1/(N + 1), and Benjamini–Hochberg at level q over m series can
 *   only pass the smallest p if 1/(N + 1) ≤ q/m, i.e. N ≥ m/q − 1 (Benjamini & Hochberg 1995, JRSS B 57:289, step-up
 *   rule, applied to its smallest p). 199 keeps a false-discovery rule meaningful for up to 10 series at q = 0.05
 *   or 20 at q = 0.1, and equals the interactive preview's cap, so a preview and the saved analysis agree. A
 *   larger network needs more: raise it per series.
 * - `shiftDetection: 'on'`, `minCoverage: 0.8`: the stretch starts after a detected abrupt shift, and windows with
 *   less than 80 % observed (not interpolated) points are not judged.
 */
export const LIVE_SETTINGS_DEFAULTS = {
  surrogates: 199,
  span: '1000 points',
  window: 0.5,
  bandwidth: 0.1,
  shiftDetection: 'on',
  minCoverage: 0.8,
} as const;

/**
 * A series' analysis settings: fields left out take the live defaults above, then the engine's. Used for creation
 * and for a PATCH alike (a PATCH replaces the settings whole), so settings sent without a number of surrogates
 * never silently drop to none.
 */
export const seriesSettingsSchema = z.preprocess((input) => {
  if (!input || typeof input !== 'object' || Array.isArray(input)) return input;
  // A legacy `spanPoints` names the span itself; the default span must not override it.
  const { span: _span, ...withoutSpan } = LIVE_SETTINGS_DEFAULTS;
  return { ...('spanPoints' in input ? withoutSpan : LIVE_SETTINGS_DEFAULTS), ...input };
}, analysisSettingsSchema);

/** A lateness allowance: a minute at least (the freshness pass runs every few minutes), ten years at most. */
const LATE_AFTER = z
  .number()
  .int()
  .min(60_000, 'At least a minute (60000 ms).')
  .max(3660 * 86_400_000);

/** A site chosen by id; null for none. Wins over `site` (a name) when both are given. */
const siteIdSchema = z.number().int().positive().nullable();

/**
 * Everything a lead can set on a series; the one schema behind the API, the forms and the seed. The site is given
 * either by `siteId` or by its name in `site` (a name not yet known creates the site, which keeps clients that only
 * ever sent a name working); `site: ''` means none.
 */
export const seriesFieldsSchema = z.object({
  name: text(200).min(1),
  site: text(200).default(''),
  siteId: siteIdSchema.optional(),
  unit: text(50).default(''),
  description: text(5000).default(''),
  intervalMs: z
    .number()
    .int()
    .positive()
    .max(100 * 366 * 86_400_000)
    .nullable()
    .default(null),
  timeZone: timeZoneSchema.default('UTC'),
  /** How long the series may deliver nothing before it is late (ms); null = 3 intervals, or 2 days (lib/alerts/lateness.ts). */
  lateAfterMs: LATE_AFTER.nullable().default(null),
  csvMapping: csvMappingSchema.default(csvMappingSchema.parse({})),
  settings: seriesSettingsSchema.default(seriesSettingsSchema.parse({})),
  duplicatePolicy: z.enum(['reject', 'replace']).default('reject'),
  /** Automatic quality-control tests (lib/quality); null: none. */
  qc: qcConfigSchema.nullable().default(null),
});

export const seriesCreateSchema = seriesFieldsSchema.extend({ slug: slugSchema });
export type SeriesCreateInput = z.input<typeof seriesCreateSchema>;
export type SeriesCreate = z.output<typeof seriesCreateSchema>;

/** PATCH: any subset of the fields; `retired` retires or restores the series. */
export const seriesUpdateSchema = z
  .object({
    name: text(200).min(1),
    site: text(200),
    siteId: siteIdSchema,
    unit: text(50),
    description: text(5000),
    intervalMs: z.number().int().positive().nullable(),
    timeZone: timeZoneSchema,
    lateAfterMs: LATE_AFTER.nullable(),
    csvMapping: csvMappingSchema,
    settings: seriesSettingsSchema,
    duplicatePolicy: z.enum(['reject', 'replace']),
    qc: qcConfigSchema.nullable(),
    retired: z.boolean(),
    /** why the settings, QC or interval changed; kept in the settings history and the audit entry */
    reason: changeReasonSchema,
  })
  .partial()
  .strict();
export type SeriesUpdate = z.output<typeof seriesUpdateSchema>;

/** GET /api/series: `find` matches name, slug or site (any part, ignoring ASCII case); `limit` caps the list. */
export const seriesListQuerySchema = z.object({
  retired: z.enum(['include']).optional(),
  find: z.string().trim().max(100).optional(),
  limit: z.coerce.number().int().min(1).max(1000).optional(),
});
export type SeriesListQuery = z.output<typeof seriesListQuerySchema>;

/**
 * A sampling interval written as an ISO 8601 duration (PT15M, PT1H, P1D; ISO 8601-1:2019, Sec. 5.5.2, read by the
 * engine's `parseExtent`), in milliseconds; '' is an irregular record (null). The bulk list's `interval` column.
 */
export const intervalTextSchema = z
  .string()
  .trim()
  .transform((value, context) => {
    if (value === '') return null;
    const parsed = isExtent(value) ? parseExtent(value) : null;
    if (parsed?.kind === 'duration') return Math.round(parsed.ms);
    context.addIssue({
      code: 'custom',
      message: 'Write the interval as an ISO 8601 duration such as PT15M, PT1H or P1D, or leave it empty for an irregular record.',
    });
    return z.NEVER;
  });

/** The columns of a bulk registration list (one row a series; the header names them, in any order). */
export const BULK_COLUMNS = {
  slug: 'required; lower-case letters, digits and single hyphens',
  name: 'required',
  site: "the site's name; a name not yet known creates the site",
  unit: 'e.g. °C or m',
  description: 'free text',
  interval: 'ISO 8601 duration: PT15M, PT1H, P1D; empty for an irregular record',
  timeZone: 'IANA zone, default UTC',
  timeColumn: "header name or 0-based position of the time column in the series' CSV files, default 0",
  valueColumn: 'header name or position of the value column, default 1',
  timeFormat: `one of ${TIME_FORMATS.join(', ')}; default iso8601`,
  duplicatePolicy: 'reject or replace, default reject',
  window: 'rolling window, default 0.5 (a fraction of the analysed stretch, "<n> points" or a duration)',
  span: 'trailing span analysed, default "1000 points"',
  surrogates: 'number of surrogate series, default 199',
} as const;

const cell = z
  .string()
  .optional()
  .transform((value) => value?.trim() ?? '');
/** A column given as a header name, or as a 0-based position when it is all digits. */
const columnCell = cell.transform((value) => (value === '' ? undefined : /^\d+$/.test(value) ? Number(value) : value));
/** A fraction when numeric, else the text ("200 points", "P90D"); left out when empty. */
const extentCell = cell.transform((value) => (value === '' ? undefined : Number.isFinite(Number(value)) ? Number(value) : value));

/**
 * One row of a bulk list, as papaparse gives it (every cell a string), read into what `seriesCreateSchema` takes
 * and checked by it: so a row is valid here exactly when `POST /api/series` would take it.
 */
export const bulkRowSchema = z
  .object({
    slug: cell,
    name: cell,
    site: cell,
    unit: cell,
    description: cell,
    interval: cell.pipe(intervalTextSchema),
    timeZone: cell,
    timeColumn: columnCell,
    valueColumn: columnCell,
    timeFormat: cell,
    duplicatePolicy: cell,
    window: extentCell,
    span: extentCell,
    surrogates: cell,
  })
  // Typed loosely here on purpose: seriesCreateSchema, piped after it, is what checks every value.
  .transform((row): Record<string, unknown> => {
    const settings = Object.fromEntries(
      Object.entries({ window: row.window, span: row.span, surrogates: row.surrogates === '' ? undefined : Number(row.surrogates) }).filter(
        ([, v]) => v !== undefined,
      ),
    );
    const csvMapping = Object.fromEntries(
      Object.entries({ timeColumn: row.timeColumn, valueColumn: row.valueColumn, timeFormat: row.timeFormat || undefined }).filter(([, v]) => v !== undefined),
    );
    return {
      slug: row.slug,
      name: row.name,
      site: row.site,
      unit: row.unit,
      description: row.description,
      intervalMs: row.interval,
      timeZone: row.timeZone || undefined,
      duplicatePolicy: row.duplicatePolicy || undefined,
      csvMapping,
      settings,
    };
  })
  .pipe(seriesCreateSchema);

/** POST /api/series/bulk: the list as CSV text; `dryRun` checks it and creates nothing. */
export const bulkRequestSchema = z.object({ csv: z.string().min(1, 'The list is empty.').max(1_000_000) }).strict();
export const bulkQuerySchema = z.object({ dryRun: z.enum(['1', 'true']).optional() });
