'use client';

import Link from 'next/link';
import { useState, type FormEvent } from 'react';
import { ApiError, api } from './api';
import { FormFooter, LabelledInput } from './FormParts';
import { buttonClass } from './ui/Button';

/** Sets a password from a mailed link (invitation or reset); the token in the link is the only credential. */
export function SetPasswordForm({ endpoint, submitLabel }: { endpoint: string; submitLabel: string }) {
  const [error, setError] = useState<string | null>(null);
  const [done, setDone] = useState(false);
  const [busy, setBusy] = useState(false);

  async function submit(event: FormEvent<HTMLFormElement>) {
    event.preventDefault();
    const form = new FormData(event.currentTarget);
    const password = String(form.get('password') ?? '');
    if (password !== String(form.get('confirm') ?? '')) {
      setError('The two passwords differ.');
      return;
    }
    setBusy(true);
    setError(null);
    try {
      await api(endpoint, { method: 'POST', body: { password } });
      setDone(true);
    } catch (error) {
      setError(error instanceof ApiError ? (error.fields?.password?.[0] ?? error.message) : 'The server could not be reached. Try again.');
    } finally {
      setBusy(false);
    }
  }

  if (done) {
    return (
      <div className="space-y-3">
        <p role="status" className="rounded bg-calm-light px-3 py-2 text-sm text-calm">
          Your password is set.
        </p>
        <Link href="/signin" className={buttonClass('primary', 'lg')}>
          Sign in
        </Link>
      </div>
    );
  }
  return (
    <form onSubmit={submit} className="space-y-4" noValidate>
      <LabelledInput
        id="password"
        label="New password"
        type="password"
        autoComplete="new-password"
        minLength={12}
        hint="At least 12 characters. A few unrelated words make a good one."
      />
      <LabelledInput id="confirm" label="The same again" type="password" autoComplete="new-password" />
      <FormFooter error={error} busy={busy} busyLabel="Saving…" label={submitLabel} />
    </form>
  );
}
