import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readQuery } from '@/lib/http/body';
import { fetchOutbox } from '@/lib/mail/outbox';
import { outboxQuerySchema } from '@/lib/schemas/mail';

export const GET = handle(async (request) => {
  await requireRole('admin');
  return NextResponse.json(await fetchOutbox(readQuery(request, outboxQuerySchema)));
});
