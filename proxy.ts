import { NextResponse, type NextRequest } from 'next/server';
import { getToken } from 'next-auth/jwt';

/**
 * Sends signed-out visitors of any screen to the sign-in page. API routes are left to answer 401 themselves
 * (through requireRole), so machines get JSON rather than a redirect.
 */
export async function proxy(request: NextRequest) {
  const token = await getToken({ req: request, secret: process.env.NEXTAUTH_SECRET });
  if (token) return NextResponse.next();
  const url = request.nextUrl.clone();
  url.pathname = '/signin';
  url.search = `?callbackUrl=${encodeURIComponent(request.nextUrl.pathname + request.nextUrl.search)}`;
  return NextResponse.redirect(url);
}

export const config = {
  matcher: ['/((?!api/|signin|invite|reset|_next/|favicon.ico).*)'],
};
