import { z } from 'zod';

/** [min, max] with min < max, both finite. */
const limits = z.tuple([z.number().finite(), z.number().finite()]).refine(([min, max]) => min < max, 'Give [min, max] with min below max.');

/**
 * A series' automatic quality-control tests, named and defined as the U.S. IOOS QARTOD manuals do (each test's
 * formula is in its file under lib/quality/). A test left out is not run. `suspectInAnalysis` decides whether points
 * flagged 3 (suspect) enter the analysis; points flagged 4 (fail) or 9 (missing) never do.
 */
export const qcConfigSchema = z
  .object({
    /** Gross range: outside the sensor's `fail` limits → 4; outside the user's `suspect` limits → 3. */
    grossRange: z
      .object({ fail: limits, suspect: limits.optional() })
      .strict()
      .refine((g) => !g.suspect || (g.suspect[0] >= g.fail[0] && g.suspect[1] <= g.fail[1]), {
        message: 'The suspect limits must lie within the fail limits.',
        path: ['suspect'],
      })
      .optional(),
    /** Spike: |xₙ − (xₙ₋₁ + xₙ₊₁)/2| above `suspect` → 3, above `fail` → 4 (units of the series). */
    spike: z
      .object({ suspect: z.number().positive(), fail: z.number().positive() })
      .strict()
      .refine((s) => s.suspect <= s.fail, { message: 'The suspect threshold must not exceed the fail threshold.', path: ['suspect'] })
      .optional(),
    /** Rate of change: |xₙ − xₙ₋₁| above `deviations` standard deviations of the preceding `periodHours` → 3. */
    rateOfChange: z
      .object({
        deviations: z.number().positive().max(100),
        periodHours: z
          .number()
          .positive()
          .max(24 * 366),
      })
      .strict()
      .optional(),
    /** Flat line: the last `suspect` (or `fail`) readings all within `tolerance` of this one → 3 (or 4). */
    flatLine: z
      .object({ tolerance: z.number().min(0), suspect: z.number().int().min(2).max(10_000), fail: z.number().int().min(2).max(10_000) })
      .strict()
      .refine((f) => f.suspect <= f.fail, { message: 'The suspect count must not exceed the fail count.', path: ['suspect'] })
      .optional(),
    /** Sampling interval: a step off the expected interval by more than `tolerance` (a fraction) → 3. */
    samplingInterval: z
      .object({ expectedSeconds: z.number().positive().optional(), tolerance: z.number().min(0).max(10).default(0.1) })
      .strict()
      .optional(),
    suspectInAnalysis: z.boolean().default(true),
  })
  .strict();
export type QcConfig = z.output<typeof qcConfigSchema>;
export type QcConfigInput = z.input<typeof qcConfigSchema>;

/**
 * An analyst's override of the flags of every point in [from, to] (ISO 8601 or epoch ms, in the series' zone when
 * no offset is given), with the reason that goes into the audit log. Re-running the tests leaves overrides alone.
 */
export const flagOverrideSchema = z
  .object({
    from: z.union([z.string().min(1).max(40), z.number().int()]),
    to: z.union([z.string().min(1).max(40), z.number().int()]),
    flag: z.union([z.literal(1), z.literal(3), z.literal(4)]),
    reason: z.string().trim().min(3, 'Say why (at least a few words).').max(2000),
  })
  .strict();
export type FlagOverride = z.output<typeof flagOverrideSchema>;

/** GET the flagged points of a stretch (what the record chart draws): from/to in epoch ms; at most `limit` points. */
export const flaggedQuerySchema = z.object({
  from: z.coerce.number().int(),
  to: z.coerce.number().int(),
  limit: z.coerce.number().int().min(1).max(5000).default(1000),
});
