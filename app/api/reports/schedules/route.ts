import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { reportScheduleSchema } from '@/lib/schemas/report';
import { createSchedule, listSchedules } from '@/lib/reports/schedules';

/** Recipient lists hold outside addresses: leads manage them and only leads see them. */
export const GET = handle(async () => {
  await requireRole('lead');
  return NextResponse.json({ items: await listSchedules() });
});

export const POST = handle(async (request) => {
  const actor = await requireRole('lead');
  const input = await readJson(request, reportScheduleSchema);
  return NextResponse.json(await createSchedule(input, actor), { status: 201 });
});
