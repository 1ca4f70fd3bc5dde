import { z } from 'zod';
import { analysisSettingsSchema } from '@/lib/engine/settings';
import { qcConfigSchema } from './quality';

/** Lower-case words joined by hyphens: safe as a folder name and in URLs, never a path. */
export const slugSchema = z
  .string()
  .min(2)
  .max(64)
  .regex(/^[a-z0-9]+(?:-[a-z0-9]+)*$/, 'Use lower-case letters, digits and single hyphens (e.g. north-basin-temp).');

export const TIME_FORMATS = [
  'iso8601',
  'date',
  'epoch-seconds',
  'epoch-milliseconds',
  'decimal-year',
  'age-years-bp',
  'age-kyr-bp',
] as const;

export const csvMappingSchema = z.object({
  timeColumn: z.union([z.string().min(1).max(200), z.number().int().min(0)]).default(0),
  valueColumn: z.union([z.string().min(1).max(200), z.number().int().min(0)]).default(1),
  timeFormat: z.enum(TIME_FORMATS).default('iso8601'),
  /** A column holding each value's QARTOD flag from the source (1, 2, 3, 4 or 9); optional. */
  flagColumn: z.union([z.string().min(1).max(200), z.number().int().min(0)]).optional(),
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

/** Everything a lead can set on a series; the one schema behind the API, the forms and the seed. */
export const seriesFieldsSchema = z.object({
  name: text(200).min(1),
  site: text(200).default(''),
  unit: text(50).default(''),
  description: text(5000).default(''),
  intervalMs: z.number().int().positive().max(100 * 366 * 86_400_000).nullable().default(null),
  timeZone: z.string().refine(isTimeZone, 'Unknown IANA time zone (e.g. Europe/Oslo or UTC).').default('UTC'),
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
    unit: text(50),
    description: text(5000),
    intervalMs: z.number().int().positive().nullable(),
    timeZone: z.string().refine(isTimeZone, 'Unknown IANA time zone.'),
    csvMapping: csvMappingSchema,
    settings: seriesSettingsSchema,
    duplicatePolicy: z.enum(['reject', 'replace']),
    qc: qcConfigSchema.nullable(),
    retired: z.boolean(),
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
