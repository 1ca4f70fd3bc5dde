import { beforeAll, describe, expect, it } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();

import { migrateDown, migrateUp } from '@/migrations';
import { UserPreference, db } from '@/models';
import { readPreferences, savePreferences } from '@/lib/users/preferences';
import { DEFAULT_PREFERENCES, preferencesUpdateSchema } from '@/lib/schemas/account';
import { makeUser } from '../alerts/helpers';

beforeAll(async () => {
  await db();
  await migrateUp();
});

describe('per-user preferences', () => {
  it('a user without a stored choice reads the defaults', async () => {
    const user = await makeUser('viewer');
    expect(await readPreferences(user)).toEqual(DEFAULT_PREFERENCES);
  });

  it('a saved chart order is read back in that order, for that user only', async () => {
    const [a, b] = [await makeUser('viewer'), await makeUser('analyst')];
    expect(await savePreferences(a, { seriesCharts: ['variance', 'record', 'recovery'] })).toEqual({ seriesCharts: ['variance', 'record', 'recovery'] });
    expect((await readPreferences(a)).seriesCharts).toEqual(['variance', 'record', 'recovery']);
    expect(await readPreferences(b)).toEqual(DEFAULT_PREFERENCES);
    await savePreferences(a, { seriesCharts: [] });
    expect((await readPreferences(a)).seriesCharts).toEqual([]);
    expect(await UserPreference.count({ where: { userId: a.id } })).toBe(1);
  });

  it('refuses unknown charts, repeats and unknown fields', () => {
    expect(preferencesUpdateSchema.safeParse({ seriesCharts: ['ac1', 'ac1'] }).success).toBe(false);
    expect(preferencesUpdateSchema.safeParse({ seriesCharts: ['no-such-chart'] }).success).toBe(false);
    expect(preferencesUpdateSchema.safeParse({ theme: 'dark' }).success).toBe(false);
  });

  it('a stored value that no longer validates falls back to the default instead of failing the page', async () => {
    const user = await makeUser('viewer');
    await UserPreference.create({ userId: user.id, value: { seriesCharts: ['retired-indicator'] } });
    expect(await readPreferences(user)).toEqual(DEFAULT_PREFERENCES);
  });

  it('migration 0014 goes down and up again', async () => {
    // Reverting 0014 reverts what came after it too; all of it comes back.
    const reverted = await migrateDown('0014-user-preferences');
    expect(reverted).toContain('0014-user-preferences');
    expect((await migrateUp()).sort()).toEqual([...reverted].sort());
  });
});
