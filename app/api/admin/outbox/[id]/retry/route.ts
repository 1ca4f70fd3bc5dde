import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { presentOutboxMessage, retryMail } from '@/lib/mail/outbox';

export const POST = handle<{ id: string }>(async (_request, { params }) => {
  const actor = await requireRole('admin');
  const id = idParam((await params).id, 'Message');
  return NextResponse.json(presentOutboxMessage(await retryMail(id, actor)));
});
