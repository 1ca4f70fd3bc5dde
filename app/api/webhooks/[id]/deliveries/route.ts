import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { readQuery } from '@/lib/http/body';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { webhookDeliveriesQuerySchema } from '@/lib/schemas/webhook';
import { fetchDeliveries } from '@/lib/webhooks/admin';

/** One endpoint's deliveries, newest first, each with its body and every attempt. */
export const GET = handle<{ id: string }>(async (request, { params }) => {
  await requireRole('admin');
  const id = idParam((await params).id, 'Webhook');
  return NextResponse.json(await fetchDeliveries(id, readQuery(request, webhookDeliveriesQuerySchema)));
});
