import { z } from 'zod';
import { passwordSchema } from './user';
import { INDICATOR_NAMES } from '@/lib/engine/settings';

/** What a signed-in person may change about themselves (role and active flag are the admin's). */
export const accountUpdateSchema = z.object({ name: z.string().trim().min(1, 'Enter a name.').max(200) }).strict();

export const passwordChangeSchema = z
  .object({ currentPassword: z.string().min(1, 'Enter your current password.').max(200), newPassword: passwordSchema })
  .strict()
  .refine((v) => v.currentPassword !== v.newPassword, { path: ['newPassword'], message: 'Choose a password different from the current one.' });

export const auditQuerySchema = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
  action: z.string().trim().max(100).optional(),
  entity: z.string().trim().max(100).optional(),
});

/** The charts the series page can show, besides one per indicator: the record with its trend, and the residuals. */
const SERIES_CHARTS = ['record', 'residuals', ...INDICATOR_NAMES] as const;
export type SeriesChart = (typeof SERIES_CHARTS)[number];
/** What a reader sees first: the record and the two indicators most rules watch. */
const DEFAULT_SERIES_CHARTS: SeriesChart[] = ['record', 'ac1', 'variance'];

/**
 * A signed-in person's preferences (PUT /api/account/preferences merges the fields sent). `seriesCharts`: which
 * charts the series page shows, in this order (indicators a series does not compute are skipped).
 */
export const preferencesSchema = z
  .object({
    seriesCharts: z
      .array(z.enum(SERIES_CHARTS))
      .max(SERIES_CHARTS.length)
      .refine((list) => new Set(list).size === list.length, 'Each chart at most once.'),
  })
  .strict();
export const preferencesUpdateSchema = preferencesSchema.partial().strict();
export type Preferences = z.output<typeof preferencesSchema>;
export const DEFAULT_PREFERENCES: Preferences = { seriesCharts: DEFAULT_SERIES_CHARTS };
