import { z } from 'zod';
import { analysisSettingsSchema } from '@/lib/engine/settings';

/**
 * Body of a what-if analysis of a stored series (the preview, and the indicator export with other settings): the
 * settings to try; any omitted field takes the engine default.
 */
export const analysisRequestSchema = z.object({ settings: analysisSettingsSchema });

/** GET/POST /api/series/{slug}/indicators: the table as CSV (default) or JSON. */
export const indicatorExportQuerySchema = z.object({ format: z.enum(['csv', 'json']).default('csv') });

/** POST /api/series/{slug}/reanalyse: the data version to analyse the series on (0: before versions were counted). */
export const reanalysisRequestSchema = z.object({
  version: z.number({ error: 'Give the data version as a whole number.' }).int('Give the data version as a whole number.').min(0).max(2_000_000_000),
});
export type ReanalysisRequest = z.infer<typeof reanalysisRequestSchema>;
