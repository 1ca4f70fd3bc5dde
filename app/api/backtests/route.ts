import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { listBacktests } from '@/lib/backtest/jobs';
import { readQuery } from '@/lib/http/body';
import { handle } from '@/lib/http/handler';
import { backtestListQuerySchema } from '@/lib/schemas/backtest';

export const GET = handle(async (request) => {
  await requireRole('viewer');
  const filter = readQuery(request, backtestListQuerySchema);
  return NextResponse.json({ backtests: await listBacktests(filter) });
});
