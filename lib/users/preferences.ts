import 'server-only';
import { UserPreference, db, writeTransaction } from '@/models';
import type { Actor } from '@/lib/auth/roles';
import { DEFAULT_PREFERENCES, preferencesSchema, preferencesUpdateSchema, type Preferences } from '@/lib/schemas/account';

/**
 * A stored document read field by field: a field that no longer validates (a chart since removed) falls back to its
 * default instead of failing the page that reads it.
 */
function readStored(value: Record<string, unknown> | undefined): Preferences {
  const out: Preferences = { ...DEFAULT_PREFERENCES };
  for (const key of Object.keys(preferencesSchema.shape) as (keyof Preferences)[]) {
    const parsed = preferencesSchema.shape[key].safeParse(value?.[key]);
    if (parsed.success) out[key] = parsed.data;
  }
  return out;
}

/** The signed-in person's preferences, defaults filled in. One indexed read. */
export async function readPreferences(actor: Pick<Actor, 'id'>): Promise<Preferences> {
  await db();
  return readStored((await UserPreference.findOne({ where: { userId: actor.id } }))?.value);
}

/** Merges `input` (any subset of the fields) into the signed-in person's preferences; returns the result. Not audited: it changes nobody else's view. */
export async function savePreferences(actor: Pick<Actor, 'id'>, input: unknown): Promise<Preferences> {
  const update = preferencesUpdateSchema.parse(input);
  return writeTransaction(async (transaction) => {
    const row = await UserPreference.findOne({ where: { userId: actor.id }, transaction });
    const value = { ...readStored(row?.value), ...update };
    if (row) await row.update({ value }, { transaction });
    else await UserPreference.create({ userId: actor.id, value }, { transaction });
    return value;
  });
}
