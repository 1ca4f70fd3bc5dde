import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readQuery } from '@/lib/http/body';
import { listIngestRuns } from '@/lib/intake/runs';
import { ingestRunQuerySchema } from '@/lib/schemas/intake';

export const GET = handle(async (request) => {
  await requireRole('viewer');
  return NextResponse.json(await listIngestRuns(readQuery(request, ingestRunQuerySchema)));
});
