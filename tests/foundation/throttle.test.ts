import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir('bw-throttle-');
const { migrateUp } = await import('@/migrations');
const { SignInThrottle, closeDatabase } = await import('@/models');
const { THROTTLE, isSignInLocked, recordSignInFailure } = await import('@/lib/auth/throttle');

beforeAll(async () => {
  await migrateUp();
});
afterAll(async () => {
  await closeDatabase();
});

describe('sign-in throttle shared through the database', () => {
  it('counts every one of many failures arriving at once, and locks at the limit', async () => {
    const now = Date.UTC(2026, 0, 1);
    // As from several web processes at once: each failure is one atomic upsert, so none is lost.
    await Promise.all(Array.from({ length: 12 }, () => recordSignInFailure('account:many@example.test', 20, now)));
    expect((await SignInThrottle.findByPk('account:many@example.test'))!.failures).toBe(12);
    expect(await isSignInLocked(['account:many@example.test'], now)).toBe(false);
    await Promise.all(Array.from({ length: 8 }, () => recordSignInFailure('account:many@example.test', 20, now + 1)));
    expect(await isSignInLocked(['account:many@example.test'], now + 2)).toBe(true);
    expect(await isSignInLocked(['account:many@example.test'], now + 1 + THROTTLE.lockMs + 1)).toBe(false);
  });

  it('starts a new window once the old one lapsed', async () => {
    const now = Date.UTC(2026, 0, 2);
    await recordSignInFailure('address:192.0.2.7', 3, now);
    await recordSignInFailure('address:192.0.2.7', 3, now + 1000);
    await recordSignInFailure('address:192.0.2.7', 3, now + THROTTLE.windowMs + 2000);
    const row = (await SignInThrottle.findByPk('address:192.0.2.7'))!;
    expect(row.failures).toBe(1);
    expect(Number(row.windowStartedAt)).toBe(now + THROTTLE.windowMs + 2000);
    expect(row.lockedUntil).toBeNull();
  });
});
