import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { removeMark } from '@/lib/marks/write';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';

export const DELETE = handle<{ id: string }>(async (_request, { params }) => {
  const actor = await requireRole('lead');
  await removeMark(idParam((await params).id, 'Mark'), actor);
  return new NextResponse(null, { status: 204 });
});
