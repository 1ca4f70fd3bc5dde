import 'server-only';
import { User, db, writeTransaction } from '@/models';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { hashPassword, verifyPassword } from '@/lib/auth/password';
import { NotFoundError, UnprocessableError } from '@/lib/http/errors';
import { accountUpdateSchema, passwordChangeSchema } from '@/lib/schemas/account';

export interface AccountView {
  id: number;
  email: string;
  name: string;
  role: string;
}

async function ownUser(actor: Actor): Promise<User> {
  await db();
  const user = await User.findByPk(actor.id);
  if (!user) throw new NotFoundError('Account');
  return user;
}

export async function fetchAccount(actor: Actor): Promise<AccountView> {
  const user = await ownUser(actor);
  return { id: user.id, email: user.email, name: user.name, role: user.role };
}

export async function renameAccount(actor: Actor, input: unknown): Promise<AccountView> {
  const { name } = accountUpdateSchema.parse(input);
  const user = await ownUser(actor);
  await writeTransaction(async (transaction) => {
    const before = user.name;
    await user.update({ name }, { transaction });
    await recordAudit({ actorId: actor.id, action: 'account.rename', entity: 'user', entityId: actor.id, details: { from: before, to: name } }, transaction);
  });
  return { id: user.id, email: user.email, name: user.name, role: user.role };
}

/** Changes one's own password; the current one must be given, so a session left open cannot lock its owner out. */
export async function changePassword(actor: Actor, input: unknown): Promise<void> {
  const { currentPassword, newPassword } = passwordChangeSchema.parse(input);
  const user = await ownUser(actor);
  if (!(await verifyPassword(currentPassword, user.passwordHash))) {
    throw new UnprocessableError('The current password is not right.', { currentPassword: ['The current password is not right.'] });
  }
  const passwordHash = await hashPassword(newPassword);
  await writeTransaction(async (transaction) => {
    await user.update({ passwordHash }, { transaction });
    await recordAudit({ actorId: actor.id, action: 'account.password-change', entity: 'user', entityId: actor.id }, transaction);
  });
}
