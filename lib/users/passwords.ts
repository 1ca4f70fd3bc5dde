import 'server-only';
import { User, db, writeTransaction } from '@/models';
import { recordAudit } from '@/lib/audit';
import { publicBaseUrl } from '@/lib/runtime/config';
import { hashPassword } from '@/lib/auth/password';
import { enqueueMail } from '@/lib/mail/outbox';
import { passwordResetMail } from '@/lib/mail/templates';
import { setPasswordSchema } from '@/lib/schemas/user';
import { consumeUserToken, issueUserToken } from './tokens';

/** At most one reset mail per account in this period, however often the form is sent. */
const RESET_MAIL_PERIOD_MS = 10 * 60_000;

/**
 * Sends a reset link if `email` belongs to an active account, and does nothing otherwise; the caller answers 202
 * either way so the form does not reveal which addresses have accounts.
 */
export async function requestPasswordReset(email: string, now = Date.now()): Promise<void> {
  await db();
  const user = await User.findOne({ where: { email: email.trim().toLowerCase() } });
  if (!user || !user.active) return;
  const period = Math.floor(now / RESET_MAIL_PERIOD_MS);
  await writeTransaction(async (transaction) => {
    const { token, expiresAt } = await issueUserToken(user, 'reset', transaction, now);
    const mail = passwordResetMail({ name: user.name, link: `${publicBaseUrl()}/reset/${token}`, expiresAt });
    const queued = await enqueueMail({ kind: 'password-reset', dedupeKey: `reset:${user.id}:${period}`, to: user.email, ...mail }, transaction);
    // A token whose mail was not queued (one already went out this period) must not stay valid unseen.
    if (!queued) throw new ResetAlreadySent();
    await recordAudit({ actorId: null, action: 'user.reset-request', entity: 'user', entityId: user.id }, transaction);
  }).catch((error) => {
    if (!(error instanceof ResetAlreadySent)) throw error;
  });
}

class ResetAlreadySent extends Error {}

async function setPassword(token: string, password: string, purpose: 'invite' | 'reset'): Promise<User> {
  const { password: plain } = setPasswordSchema.parse({ password });
  const passwordHash = await hashPassword(plain);
  return writeTransaction(async (transaction) => {
    const record = await consumeUserToken(token, purpose, transaction);
    const user = await User.findByPk(record.userId, { transaction });
    if (!user) throw new Error(`token ${record.id} points at a missing user`);
    await user.update(purpose === 'invite' ? { passwordHash, active: true } : { passwordHash }, { transaction });
    await recordAudit(
      { actorId: user.id, action: purpose === 'invite' ? 'user.accept-invitation' : 'user.reset-password', entity: 'user', entityId: user.id },
      transaction,
    );
    return user;
  });
}

/** Activates an invited account with the password its owner chose. */
export function acceptInvitation(token: string, password: string): Promise<User> {
  return setPassword(token, password, 'invite');
}

/** Sets a new password from a reset link (the account must still be active to have received one). */
export function resetPassword(token: string, password: string): Promise<User> {
  return setPassword(token, password, 'reset');
}
