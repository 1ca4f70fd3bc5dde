import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { cancelBacktest, presentBacktestJob } from '@/lib/backtest/jobs';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';

export const POST = handle<{ id: string }>(async (_request, { params }) => {
  const actor = await requireRole('lead');
  const id = idParam((await params).id, 'Backtest');
  return NextResponse.json(presentBacktestJob(await cancelBacktest(id, actor)));
});
