import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { fetchIngestRun } from '@/lib/intake/runs';

export const GET = handle<{ id: string }>(async (request, { params }) => {
  await requireRole('viewer');
  return NextResponse.json(await fetchIngestRun(idParam((await params).id, 'Ingest run')));
});
