import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { readJson } from '@/lib/http/body';
import { handle } from '@/lib/http/handler';
import { webhookCreateSchema } from '@/lib/schemas/webhook';
import { listWebhooks, registerWebhook } from '@/lib/webhooks/admin';

/** Every registered endpoint with its deliveries counted by status (never a secret). */
export const GET = handle(async () => {
  await requireRole('admin');
  return NextResponse.json({ items: await listWebhooks() });
});

/** Registers `{ url, events, description? }` → 201 `{ id, secret }`; the secret is shown this once. */
export const POST = handle(async (request) => {
  const actor = await requireRole('admin');
  const input = await readJson(request, webhookCreateSchema);
  return NextResponse.json(await registerWebhook(actor, input), { status: 201 });
});
