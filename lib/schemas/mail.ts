import { z } from 'zod';

/** GET /api/admin/outbox: filter by delivery status, paged. */
export const outboxQuerySchema = z.object({
  status: z.enum(['pending', 'sending', 'sent', 'failed']).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
});
