import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { idParam } from '@/lib/http/params';
import { reportScheduleUpdateSchema } from '@/lib/schemas/report';
import { deleteSchedule, updateSchedule } from '@/lib/reports/schedules';

export const PATCH = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('lead');
  const id = idParam((await params).id, 'Report schedule');
  return NextResponse.json(await updateSchedule(id, await readJson(request, reportScheduleUpdateSchema), actor));
});

export const DELETE = handle<{ id: string }>(async (_request, { params }) => {
  const actor = await requireRole('lead');
  await deleteSchedule(idParam((await params).id, 'Report schedule'), actor);
  return new Response(null, { status: 204 });
});
