import { z } from 'zod';
import { analysisSettingsSchema } from '@/lib/engine/settings';

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

/** Everything a lead can set on a series; the one schema behind the API, the forms and the seed. */
export const seriesFieldsSchema = z.object({
  name: text(200).min(1),
  site: text(200).default(''),
  unit: text(50).default(''),
  description: text(5000).default(''),
  intervalMs: z.number().int().positive().max(100 * 366 * 86_400_000).nullable().default(null),
  timeZone: z.string().refine(isTimeZone, 'Unknown IANA time zone (e.g. Europe/Oslo or UTC).').default('UTC'),
  csvMapping: csvMappingSchema.default(csvMappingSchema.parse({})),
  settings: analysisSettingsSchema.default(analysisSettingsSchema.parse({})),
  duplicatePolicy: z.enum(['reject', 'replace']).default('reject'),
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
    settings: analysisSettingsSchema,
    duplicatePolicy: z.enum(['reject', 'replace']),
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
