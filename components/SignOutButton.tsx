'use client';

import { signOut } from 'next-auth/react';
import { Button } from '@/components/ui/Button';

export function SignOutButton() {
  return <Button onClick={() => signOut({ callbackUrl: '/signin' })}>Sign out</Button>;
}
