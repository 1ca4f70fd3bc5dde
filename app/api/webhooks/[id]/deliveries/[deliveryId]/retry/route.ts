import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { retryDelivery } from '@/lib/webhooks/admin';

/** Sends a failed delivery of this endpoint again, with a fresh attempt budget. */
export const POST = handle<{ id: string; deliveryId: string }>(async (_request, { params }) => {
  const actor = await requireRole('admin');
  const { id, deliveryId } = await params;
  return NextResponse.json(await retryDelivery(actor, idParam(id, 'Webhook'), idParam(deliveryId, 'Delivery')));
});
