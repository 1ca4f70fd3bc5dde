import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { preferencesUpdateSchema } from '@/lib/schemas/account';
import { readPreferences, savePreferences } from '@/lib/users/preferences';

/** The signed-in person's own preferences (which charts the series page shows, and in what order). */
export const GET = handle(async () => {
  const actor = await requireRole('viewer');
  return NextResponse.json(await readPreferences(actor));
});

/** Merges the fields sent into the signed-in person's preferences. */
export const PUT = handle(async (request) => {
  const actor = await requireRole('viewer');
  return NextResponse.json(await savePreferences(actor, await readJson(request, preferencesUpdateSchema)));
});
