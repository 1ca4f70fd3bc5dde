import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { removeTransition } from '@/lib/backtest/transitions';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';

export const DELETE = handle<{ id: string }>(async (_request, { params }) => {
  const actor = await requireRole('lead');
  await removeTransition(idParam((await params).id, 'Transition'), actor);
  return new NextResponse(null, { status: 204 });
});
