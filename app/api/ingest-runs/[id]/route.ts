import { NextResponse } from 'next/server';
import { z } from 'zod';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { fetchIngestRun } from '@/lib/intake/runs';

const idSchema = z.coerce.number().int().positive();

export const GET = handle<{ id: string }>(async (request, { params }) => {
  await requireRole('viewer');
  return NextResponse.json(await fetchIngestRun(idSchema.parse((await params).id)));
});
