import { z } from 'zod';
import { MAX_ABS_TIME_MS } from '@/lib/intake/time-formats';
import { netcdfVariableName, TIME_FORMATS } from './series';

/**
 * One observation after its cells were read: a UTC instant in integer ms and a finite value. Every row of every
 * way in (drop folder, upload, push) passes this schema before it can be stored.
 */
export const observationSchema = z.object({
  t: z
    .number({ error: 'the time must be a finite instant' })
    .refine((t) => Number.isInteger(t), 'the instant must be a whole number of milliseconds')
    .refine((t) => Math.abs(t) <= MAX_ABS_TIME_MS, 'the instant is outside the supported range'),
  // zod's number already refuses NaN and ±Infinity; the messages say why in the data manager's terms.
  value: z.number({
    error: (issue) =>
      Number.isNaN(issue.input)
        ? 'NaN is not a measurement (leave the row out when a value is missing)'
        : typeof issue.input === 'number'
          ? 'an infinite value is not a measurement'
          : 'the value must be a number',
  }),
});

/**
 * A pushed JSON point: time as ISO 8601 text or a number in the series' time format, value as a number or numeric
 * text, and optionally the source's QARTOD flag (1, 2, 3, 4 or 9, as a number or text) as a CSV flag column gives
 * it; a point flagged 9 (missing) may leave its value null. The flag's scale is checked per point with the other
 * row checks, so a bad flag rejects its point (line = its position) rather than the whole body.
 */
const pushedObservationSchema = z.object({
  time: z.union([z.string().max(100), z.number()]),
  value: z.union([z.number(), z.string().max(100), z.null()]),
  flag: z.union([z.number(), z.string().max(20), z.null()]).optional(),
});
export const pushedObservationsSchema = z.array(pushedObservationSchema).min(1, 'Send at least one point.').max(2_000_000);
export type PushedObservation = z.infer<typeof pushedObservationSchema>;

/** The column choices of an upload (the preview screen's mapping); anything left out comes from the series. */
export const uploadMappingSchema = z
  .object({
    timeColumn: z.union([z.string().min(1).max(200), z.number().int().min(0)]),
    valueColumn: z.union([z.string().min(1).max(200), z.number().int().min(0)]),
    timeFormat: z.enum(TIME_FORMATS),
    delimiter: z.enum([',', ';', '\t', '|']),
    header: z.boolean(),
    /** netCDF files: the variable to read, and its QC flag variable. */
    variable: netcdfVariableName,
    flagVariable: netcdfVariableName,
  })
  .partial()
  .strict();
export type UploadMapping = z.infer<typeof uploadMappingSchema>;

/** from/to as ISO 8601 or epoch milliseconds; limit caps the points returned. */
export const observationQuerySchema = z.object({
  from: z.string().max(40).optional(),
  to: z.string().max(40).optional(),
  limit: z.coerce.number().int().min(1).max(5_000_000).optional(),
  format: z.enum(['json', 'csv']).default('json'),
});
