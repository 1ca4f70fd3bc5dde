import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { idParam } from '@/lib/http/params';
import { userUpdateSchema } from '@/lib/schemas/user';
import { presentUser, updateUser } from '@/lib/users/directory';

export const PATCH = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('admin');
  const id = idParam((await params).id, 'User');
  return NextResponse.json(presentUser(await updateUser(id, await readJson(request, userUpdateSchema), actor)));
});
