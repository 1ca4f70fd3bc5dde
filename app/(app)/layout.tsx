import { redirect } from 'next/navigation';
import type { ReactNode } from 'react';
import { AppShell } from '@/components/AppShell';
import { currentActor } from '@/lib/auth/guard';

export const dynamic = 'force-dynamic';

export default async function SignedInLayout({ children }: { children: ReactNode }) {
  const actor = await currentActor();
  if (!actor) redirect('/signin');
  return <AppShell actor={actor}>{children}</AppShell>;
}
