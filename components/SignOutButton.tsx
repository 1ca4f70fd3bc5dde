'use client';

import { signOut } from 'next-auth/react';

export function SignOutButton() {
  return (
    <button type="button" onClick={() => signOut({ callbackUrl: '/signin' })}
      className="rounded border border-rule px-3 py-1 hover:bg-paper">
      Sign out
    </button>
  );
}
