'use client';

import { signIn } from 'next-auth/react';
import { useRouter, useSearchParams } from 'next/navigation';
import { useState, type FormEvent } from 'react';
import { FormFooter, LabelledInput } from './FormParts';

const MESSAGES: Record<string, string> = {
  CredentialsSignin: 'That e-mail and password do not match an active account.',
  Locked: 'Too many failed attempts. Sign-in for this account or address is paused for 15 minutes.',
};

export function SignInForm() {
  const router = useRouter();
  const params = useSearchParams();
  const [error, setError] = useState<string | null>(params.get('error') ? (MESSAGES[params.get('error')!] ?? 'Sign-in failed.') : null);
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
      <LabelledInput id="email" label="E-mail" type="email" autoComplete="username" />
      <LabelledInput id="password" label="Password" type="password" autoComplete="current-password" />
      <FormFooter error={error} busy={busy} busyLabel="Signing in…" label="Sign in" />
    </form>
  );
}
