import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readQuery } from '@/lib/http/body';
import { alertQueueSchema } from '@/lib/schemas/alert';
import { fetchAlertQueue } from '@/lib/alerts/queries';

export const GET = handle(async (request) => {
  const actor = await requireRole('viewer');
  const query = readQuery(request, alertQueueSchema);
  return NextResponse.json(await fetchAlertQueue(query, actor));
});
