import 'server-only';
import type { NextAuthOptions } from 'next-auth';
import CredentialsProvider from 'next-auth/providers/credentials';
import { User, db, type Role } from '@/models';
import { verifyPassword } from './password';
import { THROTTLE, clearSignInFailures, isSignInLocked, recordSignInFailure, throttleKeys } from './throttle';

/** Error codes the sign-in page turns into words; a lock reads the same whether or not the account exists. */
const SIGN_IN_ERRORS = {
  invalid: 'CredentialsSignin',
  locked: 'Locked',
} as const;

/**
 * The address the nearest proxy saw: the rightmost X-Forwarded-For entry (a reverse proxy appends the peer address;
 * entries to its left come from the client and can be forged, so keying the throttle on them would let one client
 * pose as many).
 */
function clientAddress(headers: Record<string, unknown> | undefined): string {
  const forwarded = String(headers?.['x-forwarded-for'] ?? '')
    .split(',')
    .pop()!
    .trim();
  return forwarded || String(headers?.['x-real-ip'] ?? 'local');
}

export const authOptions: NextAuthOptions = {
  session: { strategy: 'jwt', maxAge: 12 * 60 * 60 },
  pages: { signIn: '/signin' },
  providers: [
    CredentialsProvider({
      name: 'Brinkwatch account',
      credentials: { email: { label: 'E-mail', type: 'email' }, password: { label: 'Password', type: 'password' } },
      async authorize(credentials, request) {
        const email = String(credentials?.email ?? '')
          .trim()
          .toLowerCase();
        const password = String(credentials?.password ?? '');
        if (!email || !password) return null;
        const keys = throttleKeys(email, clientAddress(request?.headers as Record<string, unknown> | undefined));
        if (await isSignInLocked([keys.account, keys.address])) throw new Error(SIGN_IN_ERRORS.locked);
        await db();
        const user = await User.findOne({ where: { email } });
        const passwordMatches = await verifyPassword(password, user?.passwordHash ?? null);
        if (!user || !user.active || !passwordMatches) {
          await recordSignInFailure(keys.account, THROTTLE.accountFailures);
          await recordSignInFailure(keys.address, THROTTLE.addressFailures);
          return null;
        }
        await clearSignInFailures(keys.account);
        return { id: String(user.id), email: user.email, name: user.name, role: user.role, sessionVersion: user.sessionVersion };
      },
    }),
  ],
  callbacks: {
    async jwt({ token, user }) {
      if (user) {
        token.uid = Number(user.id);
        token.role = (user as { role?: Role }).role;
        token.sv = (user as { sessionVersion?: number }).sessionVersion;
      }
      return token;
    },
    async session({ session, token }) {
      if (session.user) {
        session.user.id = token.uid as number;
        session.user.role = token.role as Role;
        session.user.sessionVersion = token.sv as number;
      }
      return session;
    },
  },
};
