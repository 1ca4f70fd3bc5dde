import { z } from 'zod';
import { changeReasonSchema } from './change-reason';
import { SURROGATE_METHODS } from '@/lib/engine/settings';
import { MARK_KINDS } from '@/lib/marks/kinds';
import { ruleCreateSchema } from './rule';

/** Body of POST /api/rules/{id}/backtest. */
export const backtestRequestSchema = z
  .object({
    /** points per analysis cycle: the rule is judged every k new points (1 = as each point arrives) */
    every: z.number().int().min(1).max(100000).default(1),
    /** series to replay on, for a default rule (one with no series of its own) */
    series: z.string().min(1).max(120).optional(),
    /** an alarm counts as a warning only this many days before a tipping point (null: one rolling window) */
    horizonDays: z
      .number()
      .positive()
      .max(365 * 1000)
      .nullable()
      .default(null),
    calibration: z
      .object({
        /** surrogate replicates of the record before the first tipping point (calibrated false-alarm rate) */
        surrogates: z.number().int().min(1).max(2000),
        method: z.enum(SURROGATE_METHODS).default('ar1'),
        /** simulated records of each kind (null and fold approach) behind the ROC; default: as many as surrogates */
        approaches: z.number().int().min(10).max(2000).optional(),
      })
      .strict()
      .nullable()
      .default(null),
    /** replay these fields instead of the stored rule's: a draft being edited in the rule editor (the rule stays as saved) */
    draft: ruleCreateSchema.optional(),
  })
  .strict();
export type BacktestRequest = z.output<typeof backtestRequestSchema>;

export const backtestListQuerySchema = z.object({
  rule: z.coerce.number().int().positive().optional(),
  series: z.string().min(1).max(120).optional(),
});

/** Body of POST /api/rules/{id}/threshold: the tau threshold picked from a calibration's ROC. */
export const thresholdSchema = z
  .object({ threshold: z.number().min(-1).max(1), jobId: z.number().int().positive().nullable().default(null), reason: changeReasonSchema.optional() })
  .strict();

/** An instant as ISO 8601 text (with a zone or Z) or UTC epoch milliseconds. */
const instantSchema = z.union([
  z.number().int().finite(),
  z.iso.datetime({ offset: true }).transform((s) => Date.parse(s)),
  z.iso.date().transform((s) => Date.parse(`${s}T00:00:00Z`)),
]);

/**
 * Body of POST /api/series/{slug}/marks. `kind`: a marked tipping point (default) or a maintenance break (sensor
 * swap, recalibration); the live analysis starts after either, backtests score against tipping points only.
 */
export const markCreateSchema = z
  .object({
    at: instantSchema,
    note: z.string().trim().max(2000).default(''),
    // 'transition' is the kind's former name, still read until the next release.
    kind: z.preprocess((kind) => (kind === 'transition' ? 'tipping-point' : kind), z.enum(MARK_KINDS)).default('tipping-point'),
  })
  .strict();
export type MarkCreate = z.output<typeof markCreateSchema>;

/** A maintenance visit for every series of a site: { at, note }. */
export const siteMaintenanceSchema = z.object({ at: instantSchema, note: z.string().trim().max(2000).default('') }).strict();
