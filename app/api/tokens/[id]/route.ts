import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { presentToken, revokeIngestToken } from '@/lib/intake/tokens';

/** Revokes an ingest token; pushes with it answer 401 from now on. */
export const DELETE = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('admin');
  const id = idParam((await params).id, 'Token');
  return NextResponse.json(presentToken(await revokeIngestToken(id, actor)));
});
