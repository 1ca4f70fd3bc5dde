import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { inviteSchema } from '@/lib/schemas/user';
import { inviteUser, listUsers, presentUser } from '@/lib/users/directory';

export const GET = handle(async () => {
  await requireRole('admin');
  return NextResponse.json({ items: (await listUsers()).map(presentUser) });
});

/** Invites a user: an inactive account with the role, activated when they set a password from the mailed link. */
export const POST = handle(async (request) => {
  const actor = await requireRole('admin');
  const user = await inviteUser(await readJson(request, inviteSchema), actor);
  return NextResponse.json(presentUser(user), { status: 201 });
});
