import { NextResponse } from 'next/server';
import { z } from 'zod';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { presentToken, revokeIngestToken } from '@/lib/intake/tokens';

const idSchema = z.coerce.number().int().positive();

/** Revokes an ingest token; pushes with it answer 401 from now on. */
export const DELETE = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('admin');
  const id = idSchema.parse((await params).id);
  return NextResponse.json(presentToken(await revokeIngestToken(id, actor)));
});
