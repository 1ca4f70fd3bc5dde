'use client';

import { signIn } from 'next-auth/react';
import { useRouter, useSearchParams } from 'next/navigation';
import { useState, type FormEvent } from 'react';

const MESSAGES: Record<string, string> = {
  CredentialsSignin: 'That e-mail and password do not match an active account.',
  Locked: 'Too many failed attempts. Sign-in for this account or address is paused for 15 minutes.',
};

export function SignInForm() {
  const router = useRouter();
  const params = useSearchParams();
  const [error, setError] = useState<string | null>(params.get('error') ? MESSAGES[params.get('error')!] ?? 'Sign-in failed.' : null);
  const [busy, setBusy] = useState(false);

  async function submit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const form = new FormData(event.currentTarget);
    setBusy(true);
    setError(null);
    const result = await signIn('credentials', {
      email: String(form.get('email') ?? ''),
      password: String(form.get('password') ?? ''),
      redirect: false,
    });
    setBusy(false);
    if (!result || result.error) {
      setError(MESSAGES[result?.error ?? ''] ?? 'Sign-in failed. Try again.');
      return;
    }
    const next = params.get('callbackUrl');
    router.replace(next && next.startsWith('/') && !next.startsWith('//') ? next : '/');
    router.refresh();
  }

  return (
    <form onSubmit={submit} className="space-y-4" noValidate>
      {params.get('notice') === 'password-changed' && (
        <p role="status" className="rounded bg-calm-light px-3 py-2 text-sm text-calm">
          Your password was changed and every session was ended. Sign in with the new password.
        </p>
      )}
      <div>
        <label htmlFor="email" className="block text-sm font-medium">E-mail</label>
        <input id="email" name="email" type="email" autoComplete="username" required
          className="mt-1 w-full rounded border border-rule bg-card px-3 py-2" />
      </div>
      <div>
        <label htmlFor="password" className="block text-sm font-medium">Password</label>
        <input id="password" name="password" type="password" autoComplete="current-password" required
          className="mt-1 w-full rounded border border-rule bg-card px-3 py-2" />
      </div>
      {error && <p role="alert" className="rounded bg-warning-light px-3 py-2 text-sm text-warning">{error}</p>}
      <button type="submit" disabled={busy}
        className="w-full rounded bg-tide px-4 py-2 font-medium text-white hover:bg-tide-dark disabled:opacity-60">
        {busy ? 'Signing in…' : 'Sign in'}
      </button>
    </form>
  );
}
