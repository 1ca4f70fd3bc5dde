import { z } from 'zod';
import { ROLES } from '@/lib/auth/roles';

const emailSchema = z.string().trim().toLowerCase().pipe(z.email().max(254));

/** Long enough to resist guessing without rules on character classes (NIST SP 800-63B, Sec. 5.1.1.2: at least 8). */
export const passwordSchema = z.string().min(12, 'Use at least 12 characters.').max(200);

export const inviteSchema = z.object({ email: emailSchema, name: z.string().trim().min(1).max(200), role: z.enum(ROLES) }).strict();
export const userUpdateSchema = z
  .object({ role: z.enum(ROLES), active: z.boolean(), name: z.string().trim().min(1).max(200) })
  .partial()
  .strict();
export const resetRequestSchema = z.object({ email: z.string().trim().toLowerCase().max(254) }).strict();
export const setPasswordSchema = z.object({ password: passwordSchema }).strict();
export type InviteInput = z.output<typeof inviteSchema>;
export type UserUpdate = z.output<typeof userUpdateSchema>;
