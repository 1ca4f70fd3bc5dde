import { z } from 'zod';
import { DETREND_METHODS } from './detrend';
import { parseExtent } from './extent';

/** The rolling indicators the engine computes (see README, "Indicator definitions"). */
export const INDICATOR_NAMES = ['variance', 'sd', 'cv', 'ac1', 'skewness', 'kurtosis', 'recovery'] as const;
export type IndicatorName = (typeof INDICATOR_NAMES)[number];

export const SURROGATE_METHODS = ['ar1', 'phase'] as const;
export type SurrogateMethod = (typeof SURROGATE_METHODS)[number];

/**
 * Settings of one analysis. Every field has a default, so `analysisSettingsSchema.parse({})` gives the
 * engine defaults (the command line's defaults).
 */
// TEMP engine contract shim: extents, span, minCoverage, samplingChange, shiftDetection (CONTRACT.md).
const extentText = z.string().trim().refine((v) => { try { parseExtent(v); return true; } catch { return false; } }, 'a fraction, "<n> points" or an ISO 8601 duration');
const legacySpan = (input: unknown) => {
  if (!input || typeof input !== 'object' || !('spanPoints' in input)) return input;
  const { spanPoints, ...rest } = input as Record<string, unknown>;
  return 'span' in rest || spanPoints === null || spanPoints === undefined ? rest : { ...rest, span: `${spanPoints} points` };
};

export const analysisSettingsSchema = z.preprocess(legacySpan, z.object({
  detrend: z.enum(DETREND_METHODS).default('gaussian'),
  /** Gaussian kernel bandwidth as a fraction of the series length (h = bandwidth · n points). */
  bandwidth: z.union([z.number().positive().max(100), extentText]).default(0.1),
  /** Width of the centred moving average, in points (odd). */
  movingAverageWidth: z
    .number()
    .int()
    .min(3)
    .refine((v) => v % 2 === 1, { message: 'must be odd' })
    .default(11),
  /** Rolling window as a fraction of the series length (w = round(window · n) points, at least 8). */
  window: z.union([z.number().positive().max(1), extentText]).default(0.5),
  indicators: z
    .array(z.enum(INDICATOR_NAMES))
    .min(1)
    .transform((list) => INDICATOR_NAMES.filter((name) => list.includes(name)))
    .default([...INDICATOR_NAMES]),
  surrogates: z.number().int().min(0).max(100000).default(0),
  surrogateMethod: z.enum(SURROGATE_METHODS).default('ar1'),
  seed: z.number().int().default(1),
  seasonal: z.enum(['none', 'month', 'day-of-year']).default('none'),
  logTransform: z.boolean().default(false),
  /** Longest run of missing grid points filled by linear interpolation. */
  maxGap: z.number().int().min(0).default(3),
  gapPolicy: z.enum(['error', 'latest-stretch']).default('error'),
  /** Analyse only the trailing span of this many grid points (null = whole record). */
  span: z.union([z.number().positive().max(1), extentText]).nullable().default(null),
  minCoverage: z.number().gt(0).max(1).default(0.8),
  samplingChange: z.enum(['start-after', 'subsample']).default('start-after'),
  shiftDetection: z.enum(['on', 'off']).default('on'),
  sensitivity: z.boolean().default(false),
}));

export type AnalysisSettings = z.infer<typeof analysisSettingsSchema>;
