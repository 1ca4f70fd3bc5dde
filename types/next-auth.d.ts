import type { Role } from '@/lib/auth/roles';

declare module 'next-auth' {
  interface Session {
    user: { id: number; role: Role; sessionVersion: number; name?: string | null; email?: string | null; image?: string | null };
  }
}
