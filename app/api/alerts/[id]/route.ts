import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { fetchAlertDetail } from '@/lib/alerts/queries';

export const GET = handle<{ id: string }>(async (_request, { params }) => {
  const actor = await requireRole('viewer');
  const id = idParam((await params).id, 'Alert');
  return NextResponse.json(await fetchAlertDetail(id, actor));
});
