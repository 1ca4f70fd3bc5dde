import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { requestBacktest } from '@/lib/backtest/jobs';
import { readJson } from '@/lib/http/body';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { backtestRequestSchema } from '@/lib/schemas/backtest';

/** Queues a backtest (and optional calibration) of the rule; the scheduler runs it. 202 with the job id. */
export const POST = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const id = idParam((await params).id, 'Rule');
  const body = await readJson(request, backtestRequestSchema);
  const job = await requestBacktest(id, body, actor);
  return NextResponse.json({ jobId: job.id }, { status: 202 });
});
