import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { revokeApiToken } from '@/lib/auth/api-tokens';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';

/** Revokes one of the caller's own tokens; requests with it are refused from then on. */
export const DELETE = handle<{ id: string }>(async (_request, { params }) => {
  const actor = await requireRole('viewer');
  return NextResponse.json(await revokeApiToken(actor, idParam((await params).id, 'Token')));
});
