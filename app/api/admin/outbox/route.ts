import { NextResponse } from 'next/server';
import { z } from 'zod';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { readQuery } from '@/lib/http/body';
import { fetchOutbox } from '@/lib/mail/outbox';

const outboxQuerySchema = z.object({
  status: z.enum(['pending', 'sending', 'sent', 'failed']).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
});

export const GET = handle(async (request) => {
  await requireRole('admin');
  return NextResponse.json(await fetchOutbox(readQuery(request, outboxQuerySchema)));
});
