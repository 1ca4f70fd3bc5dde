import { z } from 'zod';
import { passwordSchema } from './user';

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
