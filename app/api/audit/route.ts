import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { fetchAuditPage } from '@/lib/audit/log';

/** GET (admin): the audit log, newest first; `?page=&pageSize=&action=&entity=`. */
export const GET = handle(async (request) => {
  await requireRole('admin');
  return NextResponse.json(await fetchAuditPage(Object.fromEntries(new URL(request.url).searchParams)));
});
