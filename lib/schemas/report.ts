import { z } from 'zod';
import { REPORT_CADENCES } from '@/models/ReportSchedule';
import { REPORT_TABLES } from '@/lib/reports/period-shape';

const day = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'Use YYYY-MM-DD.')
  .refine((v) => !Number.isNaN(Date.parse(`${v}T00:00:00Z`)) && new Date(`${v}T00:00:00Z`).toISOString().startsWith(v), 'Not a calendar date.');

/** GET /api/reports/period: a period of whole UTC days (at most 10 years), optionally one site, JSON or one CSV table. */
export const periodReportQuerySchema = z
  .object({
    from: day,
    to: day,
    site: z
      .string()
      .trim()
      .max(200)
      .optional()
      .transform((v) => v || undefined),
    format: z.enum(['json', 'csv']).default('json'),
    table: z.enum(REPORT_TABLES).default('alerts'),
  })
  .superRefine((v, ctx) => {
    if (v.to < v.from) ctx.addIssue({ code: 'custom', path: ['to'], message: 'The period ends before it starts.' });
    else if (Date.parse(v.to) - Date.parse(v.from) > 3660 * 86_400_000)
      ctx.addIssue({ code: 'custom', path: ['to'], message: 'A report covers at most ten years.' });
  });
export type PeriodReportQuery = z.output<typeof periodReportQuerySchema>;

/** A recipient list: addresses, with or without an account here; lower-cased, duplicates folded. */
const recipients = z
  .array(z.string().trim().toLowerCase().pipe(z.email('Not an e-mail address.').max(254)))
  .min(1, 'Name at least one recipient.')
  .max(200)
  .transform((list) => [...new Set(list)]);

/** A lead's scheduled report: name, site ('' = network), monthly or quarterly, recipients. */
export const reportScheduleSchema = z
  .object({
    name: z.string().trim().min(1).max(200),
    site: z.string().trim().max(200).default(''),
    cadence: z.enum(REPORT_CADENCES),
    recipients,
    active: z.boolean().default(true),
  })
  .strict();
export type ReportScheduleInput = z.output<typeof reportScheduleSchema>;

export const reportScheduleUpdateSchema = reportScheduleSchema.partial().strict();
export type ReportScheduleUpdate = z.output<typeof reportScheduleUpdateSchema>;
