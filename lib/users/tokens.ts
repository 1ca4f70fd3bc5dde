import 'server-only';
import crypto from 'node:crypto';
import { Op, type Transaction } from 'sequelize';
import { UserToken, type User } from '@/models';
import type { UserTokenPurpose } from '@/models/UserToken';
import { UnprocessableError } from '@/lib/http/errors';

/** Invitations give a week to respond; a reset link is a live credential, so it lasts an hour (common practice). */
export const TOKEN_LIFETIME_MS: Record<UserTokenPurpose, number> = { invite: 7 * 86_400_000, reset: 3_600_000 };

export function hashToken(token: string): string {
  return crypto.createHash('sha256').update(token).digest('hex');
}

/**
 * Issues a link secret: 32 random bytes (base64url) go into the mail, only their SHA-256 into the database, so a
 * leaked database copy opens no account. Earlier unused tokens of the same purpose are retired.
 */
export async function issueUserToken(user: User, purpose: UserTokenPurpose, transaction: Transaction, now = Date.now()) {
  await UserToken.update({ usedAt: new Date(now) }, { where: { userId: user.id, purpose, usedAt: null }, transaction });
  const token = crypto.randomBytes(32).toString('base64url');
  const expiresAt = new Date(now + TOKEN_LIFETIME_MS[purpose]);
  await UserToken.create({ userId: user.id, purpose, tokenHash: hashToken(token), expiresAt, usedAt: null }, { transaction });
  return { token, expiresAt };
}

/**
 * Spends a token: valid only if it exists for this purpose, is unused and has not expired. Marked used in the
 * caller's transaction with a conditional update, so two simultaneous uses cannot both succeed.
 */
export async function consumeUserToken(token: string, purpose: UserTokenPurpose, transaction: Transaction, now = Date.now()): Promise<UserToken> {
  const invalid = () => new UnprocessableError('This link is invalid, already used or expired. Ask for a new one.');
  if (!/^[A-Za-z0-9_-]{20,100}$/.test(token)) throw invalid();
  const record = await UserToken.findOne({ where: { tokenHash: hashToken(token), purpose }, transaction });
  if (!record || record.usedAt !== null || record.expiresAt.getTime() <= now) throw invalid();
  const [changed] = await UserToken.update({ usedAt: new Date(now) }, { where: { id: record.id, usedAt: { [Op.is]: null } }, transaction });
  if (changed !== 1) throw invalid();
  return record;
}
