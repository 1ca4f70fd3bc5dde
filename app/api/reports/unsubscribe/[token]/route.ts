import { NextResponse } from 'next/server';
import { handle } from '@/lib/http/handler';
import { unsubscribe } from '@/lib/reports/schedules';

/** Public: the signed token in the path names the schedule and the address; recipients may have no account. */
export const POST = handle<{ token: string }>(async (_request, { params }) => {
  const { token } = await params;
  return NextResponse.json(await unsubscribe(decodeURIComponent(token)));
});
