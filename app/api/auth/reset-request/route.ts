import { NextResponse } from 'next/server';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { resetRequestSchema } from '@/lib/schemas/user';
import { requestPasswordReset } from '@/lib/users/passwords';

/** Public. Always 202 with the same words, whether or not the address has an account. */
export const POST = handle(async (request) => {
  const { email } = await readJson(request, resetRequestSchema);
  await requestPasswordReset(email);
  return NextResponse.json({ message: 'If that address has an active account, a reset link is on its way.' }, { status: 202 });
});
