import 'server-only';
import { UniqueConstraintError } from 'sequelize';
import { User, db, writeTransaction } from '@/models';
import { ConflictError, NotFoundError } from '@/lib/http/errors';
import { recordAudit } from '@/lib/audit';
import { publicBaseUrl } from '@/lib/runtime/config';
import type { Actor, Role } from '@/lib/auth/roles';
import { enqueueMail } from '@/lib/mail/outbox';
import { invitationMail } from '@/lib/mail/templates';
import { inviteSchema, userUpdateSchema, type InviteInput, type UserUpdate } from '@/lib/schemas/user';
import { issueUserToken } from './tokens';

/** A user as the admin page and the users API carry it (times as ISO 8601 strings). */
export interface UserView {
  id: number;
  email: string;
  name: string;
  role: Role;
  active: boolean;
  /** Invited but not yet accepted: inactive and without a password. */
  invited: boolean;
  createdAt: string;
  updatedAt: string;
}

export function presentUser(user: User): UserView {
  return {
    id: user.id,
    email: user.email,
    name: user.name,
    role: user.role,
    active: user.active,
    /** Invited but not yet accepted: inactive and without a password. */
    invited: !user.active && user.passwordHash === null,
    createdAt: user.createdAt.toISOString(),
    updatedAt: user.updatedAt.toISOString(),
  };
}

export async function listUsers(): Promise<User[]> {
  await db();
  return User.findAll({
    order: [
      ['name', 'ASC'],
      ['id', 'ASC'],
    ],
  });
}

/** Creates an inactive account with the chosen role and mails a single-use link to set a password. 409 if the address is taken. */
export async function inviteUser(input: InviteInput, actor: Actor): Promise<User> {
  const fields = inviteSchema.parse(input);
  try {
    return await writeTransaction(async (transaction) => {
      const user = await User.create({ ...fields, passwordHash: null, active: false }, { transaction });
      const { token, expiresAt } = await issueUserToken(user, 'invite', transaction);
      const mail = invitationMail({ name: user.name, role: user.role, invitedBy: actor.name, link: `${publicBaseUrl()}/invite/${token}`, expiresAt });
      await enqueueMail({ kind: 'invitation', dedupeKey: `invite:${user.id}:${expiresAt.getTime()}`, to: user.email, ...mail }, transaction);
      await recordAudit(
        { actorId: actor.id, action: 'user.invite', entity: 'user', entityId: user.id, details: { email: user.email, role: user.role } },
        transaction,
      );
      return user;
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw new ConflictError(`An account for ${fields.email} already exists.`);
    throw error;
  }
}

/**
 * Changes a user's role, name or active flag. Takes effect on the user's next request, since requireRole reads
 * the database each time. The last active admin cannot be demoted or deactivated (nobody could undo it).
 */
export async function updateUser(id: number, input: UserUpdate, actor: Actor): Promise<User> {
  const changes = userUpdateSchema.parse(input);
  return writeTransaction(async (transaction) => {
    const user = await User.findByPk(id, { transaction });
    if (!user) throw new NotFoundError('User');
    const losesAdmin = user.role === 'admin' && user.active && ((changes.role !== undefined && changes.role !== 'admin') || changes.active === false);
    if (losesAdmin && (await User.count({ where: { role: 'admin', active: true }, transaction })) <= 1)
      throw new ConflictError('This is the last active admin; make someone else admin first.');
    const before = { role: user.role, active: user.active, name: user.name };
    await user.update(changes, { transaction });
    await recordAudit({ actorId: actor.id, action: 'user.update', entity: 'user', entityId: id, details: { before, changes } }, transaction);
    return user;
  });
}
