import { z } from 'zod';

/** GET /api/ingest-runs: filters and paging of the intake log. */
export const ingestRunQuerySchema = z.object({
  series: z.string().max(64).optional(),
  status: z.enum(['running', 'succeeded', 'rejected', 'failed']).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
});
export type IngestRunQuery = z.infer<typeof ingestRunQuerySchema>;

/** POST /api/series/{slug}/tokens: a push token's label (the secret is generated). */
export const tokenIssueSchema = z.object({ label: z.string().trim().max(200).default('') }).strict();
