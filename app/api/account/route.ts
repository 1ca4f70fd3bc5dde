import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { changePassword, fetchAccount, renameAccount } from '@/lib/users/account';
import { accountUpdateSchema, passwordChangeSchema } from '@/lib/schemas/account';

/** GET (any role): who am I. */
export const GET = handle(async () => {
  const actor = await requireRole('viewer');
  return NextResponse.json(await fetchAccount(actor));
});

/** PATCH (any role): `{ name }` of one's own account. */
export const PATCH = handle(async (request) => {
  const actor = await requireRole('viewer');
  return NextResponse.json(await renameAccount(actor, await readJson(request, accountUpdateSchema)));
});

/** POST (any role): `{ currentPassword, newPassword }` changes one's own password. */
export const POST = handle(async (request) => {
  const actor = await requireRole('viewer');
  await changePassword(actor, await readJson(request, passwordChangeSchema));
  return NextResponse.json({ ok: true });
});
