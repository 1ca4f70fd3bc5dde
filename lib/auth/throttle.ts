import 'server-only';
import { SignInThrottle, db } from '@/models';
import { config } from '@/lib/runtime/config';

/** Failures allowed inside the window before a key is locked, and how long the lock lasts. */
export const THROTTLE = {
  accountFailures: config().SIGNIN_MAX_FAILURES_ACCOUNT,
  addressFailures: config().SIGNIN_MAX_FAILURES_ADDRESS,
  windowMs: 15 * 60 * 1000,
  lockMs: 15 * 60 * 1000,
};

export function throttleKeys(email: string, address: string): { account: string; address: string } {
  return { account: `account:${email.trim().toLowerCase()}`, address: `address:${address}` };
}

/** True when either key is locked now. Keys exist for unknown e-mails too, so a lock reveals nothing. */
export async function isSignInLocked(keys: string[], now = Date.now()): Promise<boolean> {
  await db();
  const rows = await SignInThrottle.findAll({ where: { key: keys } });
  return rows.some((row) => row.lockedUntil !== null && row.lockedUntil > now);
}

export async function recordSignInFailure(key: string, limit: number, now = Date.now()): Promise<void> {
  await db();
  const row = await SignInThrottle.findByPk(key);
  if (!row || now - row.windowStartedAt > THROTTLE.windowMs) {
    await SignInThrottle.upsert({ key, failures: 1, windowStartedAt: now, lockedUntil: limit <= 1 ? now + THROTTLE.lockMs : null });
    return;
  }
  const failures = row.failures + 1;
  await row.update({ failures, lockedUntil: failures >= limit ? now + THROTTLE.lockMs : row.lockedUntil });
}

export async function clearSignInFailures(key: string): Promise<void> {
  await db();
  await SignInThrottle.destroy({ where: { key } });
}
