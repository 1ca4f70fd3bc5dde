import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { findBacktest, presentBacktestJob } from '@/lib/backtest/jobs';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';

/** Status, progress and (once done) the result of one backtest. */
export const GET = handle<{ id: string }>(async (_request, { params }) => {
  await requireRole('viewer');
  const id = idParam((await params).id, 'Backtest');
  return NextResponse.json(presentBacktestJob(await findBacktest(id), { withResult: true }));
});
