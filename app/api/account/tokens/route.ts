import { NextResponse } from 'next/server';
import { requireRole } from '@/lib/auth/guard';
import { issueApiToken, listApiTokens } from '@/lib/auth/api-tokens';
import { readJson } from '@/lib/http/body';
import { handle } from '@/lib/http/handler';
import { apiTokenCreateSchema } from '@/lib/schemas/api-token';

/** The caller's own personal API tokens (never their secrets). */
export const GET = handle(async () => {
  const actor = await requireRole('viewer');
  return NextResponse.json({ tokens: await listApiTokens(actor) });
});

/** Issues a personal token `{ name, role? }` → 201 `{ id, token, role }`; the token is shown this once. */
export const POST = handle(async (request) => {
  const actor = await requireRole('viewer');
  const input = await readJson(request, apiTokenCreateSchema);
  return NextResponse.json(await issueApiToken(actor, input), { status: 201 });
});
