import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();
const { migrateUp } = await import('@/migrations');
const { closeDatabase } = await import('@/models');
const { acquireLease, releaseLease, renewLease } = await import('@/lib/db/leases');

describe('database leases', () => {
  beforeAll(async () => {
    await migrateUp();
  });
  afterAll(async () => {
    await closeDatabase();
  });

  test('one holder at a time; a live lease is not taken, an expired one is', async () => {
    const now = 1_000_000;
    expect(await acquireLease('file:a', 10_000, 'first', now)).toBe(true);
    expect(await acquireLease('file:a', 10_000, 'second', now + 5_000)).toBe(false);
    expect(await acquireLease('file:a', 10_000, 'first', now + 5_000)).toBe(true); // the holder may re-claim
    expect(await acquireLease('file:a', 10_000, 'second', now + 20_000)).toBe(true); // first died: taken over
    expect(await renewLease('file:a', 10_000, 'first', now + 20_000)).toBe(false); // the old holder learns it lost
    expect(await renewLease('file:a', 10_000, 'second', now + 21_000)).toBe(true);
    await releaseLease('file:a', 'first'); // not the holder: no effect
    expect(await acquireLease('file:a', 10_000, 'third', now + 22_000)).toBe(false);
    await releaseLease('file:a', 'second');
    expect(await acquireLease('file:a', 10_000, 'third', now + 22_000)).toBe(true);
  });
});
