import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { readJson } from '@/lib/http/body';
import { handle } from '@/lib/http/handler';
import { idParam } from '@/lib/http/params';
import { webhookUpdateSchema } from '@/lib/schemas/webhook';
import { removeWebhook, updateWebhook } from '@/lib/webhooks/admin';

/** Pauses or resumes an endpoint (`{ active }`), or changes its events or note. */
export const PATCH = handle<{ id: string }>(async (request, { params }) => {
  const actor = await requireRole('admin');
  const id = idParam((await params).id, 'Webhook');
  return NextResponse.json(await updateWebhook(actor, id, await readJson(request, webhookUpdateSchema)));
});

/** Removes an endpoint with its deliveries. */
export const DELETE = handle<{ id: string }>(async (_request, { params }) => {
  const actor = await requireRole('admin');
  await removeWebhook(actor, idParam((await params).id, 'Webhook'));
  return new NextResponse(null, { status: 204 });
});
