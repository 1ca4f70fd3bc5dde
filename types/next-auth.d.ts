import type { Role } from '@/models/roles';

declare module 'next-auth' {
  interface Session {
    user: { id: number; role: Role; sessionVersion: number; name?: string | null; email?: string | null; image?: string | null };
  }
}
