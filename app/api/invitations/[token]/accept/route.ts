import { NextResponse } from 'next/server';
import { handle } from '@/lib/http/handler';
import { readJson } from '@/lib/http/body';
import { setPasswordSchema } from '@/lib/schemas/user';
import { acceptInvitation } from '@/lib/users/passwords';

/** Public: the single-use token in the path is the credential. */
export const POST = handle<{ token: string }>(async (request, { params }) => {
  const { token } = await params;
  const { password } = await readJson(request, setPasswordSchema);
  const user = await acceptInvitation(token, password);
  return NextResponse.json({ email: user.email, active: user.active });
});
