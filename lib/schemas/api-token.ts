import { z } from 'zod';
import { ROLES } from '@/lib/auth/roles';

/** Body of POST /api/account/tokens: a name to recognise the token by and, optionally, a role lower than one's own. */
export const apiTokenCreateSchema = z
  .object({
    name: z.string().trim().min(1, 'Name the token (e.g. the script that uses it).').max(100),
    role: z.enum(ROLES).optional(),
  })
  .strict();
export type ApiTokenCreate = z.output<typeof apiTokenCreateSchema>;
