import { z } from 'zod';
import { DETREND_METHODS } from './detrend';
import { isExtent } from './extent';
import { DEFAULT_INDICATORS, INDICATOR_NAMES } from './indicators';

/** The rolling indicators the engine computes (the registry, lib/engine/indicators; README, "Indicator definitions"). */
export { INDICATOR_NAMES, type IndicatorName } from './indicators';

export const SURROGATE_METHODS = ['ar1', 'phase'] as const;
export type SurrogateMethod = (typeof SURROGATE_METHODS)[number];

/**
 * Default of `maxEvaluatedWindows`: chosen so a 1e6-point record with 50 % windows analyses with every indicator in
 * under 30 s on one core (bench/engine.bench.ts), while a record of a few thousand points evaluates every window.
 */
export const MAX_EVALUATED_WINDOWS = 100;

const EXTENT_MESSAGE = 'must be a fraction, "<n> points" or an ISO 8601 duration such as P90D';
/** An extent (lib/engine/extent.ts): a fraction up to `maxFraction` of the stretch, "<n> points", or an ISO 8601 duration. */
const extent = (maxFraction: number) => z.union([z.number().positive().max(maxFraction), z.string().refine(isExtent, { message: EXTENT_MESSAGE })]);

/** Stored settings from before spans were extents carry `spanPoints` (an integer); it reads as "<n> points". */
function upgradeLegacy(raw: unknown): unknown {
  if (raw === null || typeof raw !== 'object' || !('spanPoints' in raw)) return raw;
  const { spanPoints, ...rest } = raw as Record<string, unknown>;
  if ('span' in rest || spanPoints === null || spanPoints === undefined) return rest;
  return { ...rest, span: Number.isInteger(spanPoints) ? `${spanPoints} points` : spanPoints };
}

/**
 * Settings of one analysis. Every field has a default, so `analysisSettingsSchema.parse({})` gives the
 * engine defaults (the command line's defaults).
 */
export const analysisSettingsSchema = z.preprocess(
  upgradeLegacy,
  z.object({
    detrend: z.enum(DETREND_METHODS).default('local-linear'),
    /** Kernel standard deviation h of the gaussian / local-linear smoother: fraction of the stretch (h = bandwidth · n points), points or a duration. */
    bandwidth: extent(100).default(0.1),
    /** Width of the centred moving average, in points (odd). */
    movingAverageWidth: z
      .number()
      .int()
      .min(3)
      .refine((v) => v % 2 === 1, { message: 'must be odd' })
      .default(11),
    /** Rolling window: fraction of the stretch (w = round(window · n) points, at least 8), points or a duration. */
    window: extent(1).default(0.5),
    indicators: z
      .array(z.enum(INDICATOR_NAMES))
      .min(1)
      .transform((list) => INDICATOR_NAMES.filter((name) => list.includes(name)))
      .default([...DEFAULT_INDICATORS]),
    /**
     * The indicators that cost more than O(1) per window (those computed from the window's residuals, kind 'window' in
     * lib/engine/indicators) are evaluated at no more than this many windows, evenly spaced and always including the
     * latest; their Kendall tau is taken over those.
     */
    maxEvaluatedWindows: z.number().int().min(10).max(1_000_000).default(MAX_EVALUATED_WINDOWS),
    surrogates: z.number().int().min(0).max(100000).default(0),
    surrogateMethod: z.enum(SURROGATE_METHODS).default('ar1'),
    seed: z.number().int().default(1),
    seasonal: z.enum(['none', 'month', 'day-of-year']).default('none'),
    logTransform: z.boolean().default(false),
    /** Longest run of missing grid points filled by linear interpolation. */
    maxGap: z.number().int().min(0).default(3),
    gapPolicy: z.enum(['error', 'latest-stretch']).default('error'),
    /** Analyse only the trailing span of the record (null = whole record): fraction of the record, points or a duration. */
    span: extent(1).nullable().default(null),
    /** Windows whose share of observed (not interpolated) points is below this are not judged (NaN). */
    minCoverage: z.number().positive().max(1).default(0.8),
    /** A change of sampling interval: start the stretch at it, or subsample the finer part onto the coarser grid. */
    samplingChange: z.enum(['start-after', 'subsample']).default('start-after'),
    /** Detect abrupt level shifts and start the stretch after the last one. */
    shiftDetection: z.enum(['on', 'off']).default('on'),
    sensitivity: z.boolean().default(false),
  }),
);

export type AnalysisSettings = z.infer<typeof analysisSettingsSchema>;
