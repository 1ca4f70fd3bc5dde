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

/**
 * Counts one failure of `key` in one atomic upsert, so failures arriving at several web processes or machines at
 * once are all counted (a read and a separate write would let two of them write the same count): a new key or a
 * lapsed window starts at 1, else the count goes up by one, and reaching `limit` locks the key for the lock time.
 */
export async function recordSignInFailure(key: string, limit: number, now = Date.now()): Promise<void> {
  const sequelize = await db();
  const lapsed = 'sign_in_throttle.window_started_at < :windowStart';
  await sequelize.query(
    `INSERT INTO sign_in_throttle (key, failures, window_started_at, locked_until) VALUES (:key, 1, :now, :firstLock)
     ON CONFLICT (key) DO UPDATE SET
       failures = CASE WHEN ${lapsed} THEN 1 ELSE sign_in_throttle.failures + 1 END,
       locked_until = CASE WHEN ${lapsed} THEN :firstLock
                           WHEN sign_in_throttle.failures + 1 >= :limit THEN :lockedUntil
                           ELSE sign_in_throttle.locked_until END,
       window_started_at = CASE WHEN ${lapsed} THEN :now ELSE sign_in_throttle.window_started_at END`,
    {
      replacements: {
        key,
        now,
        limit,
        windowStart: now - THROTTLE.windowMs,
        lockedUntil: now + THROTTLE.lockMs,
        firstLock: limit <= 1 ? now + THROTTLE.lockMs : null,
      },
    },
  );
}

export async function clearSignInFailures(key: string): Promise<void> {
  await db();
  await SignInThrottle.destroy({ where: { key } });
}
