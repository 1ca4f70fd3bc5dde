'use client';

import Link from 'next/link';
import { useState, type FormEvent } from 'react';

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
      const response = await fetch(endpoint, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ password }) });
      if (response.ok) {
        setDone(true);
        return;
      }
      const body = await response.json().catch(() => null);
      setError(body?.error?.fields?.password?.[0] ?? body?.error?.message ?? 'That did not work. Try again.');
    } catch {
      setError('The server could not be reached. Try again.');
    } finally {
      setBusy(false);
    }
  }

  if (done) {
    return (
      <div className="space-y-3">
        <p role="status" className="rounded bg-calm-light px-3 py-2 text-sm text-calm">Your password is set.</p>
        <Link href="/signin" className="inline-block rounded bg-tide px-4 py-2 font-medium text-white hover:bg-tide-dark">Sign in</Link>
      </div>
    );
  }
  return (
    <form onSubmit={submit} className="space-y-4" noValidate>
      <div>
        <label htmlFor="password" className="block text-sm font-medium">New password</label>
        <input id="password" name="password" type="password" autoComplete="new-password" required minLength={12}
          className="mt-1 w-full rounded border border-rule bg-card px-3 py-2" />
        <p className="mt-1 text-xs text-ink-soft">At least 12 characters. A few unrelated words make a good one.</p>
      </div>
      <div>
        <label htmlFor="confirm" className="block text-sm font-medium">The same again</label>
        <input id="confirm" name="confirm" type="password" autoComplete="new-password" required
          className="mt-1 w-full rounded border border-rule bg-card px-3 py-2" />
      </div>
      {error && <p role="alert" className="rounded bg-warning-light px-3 py-2 text-sm text-warning">{error}</p>}
      <button type="submit" disabled={busy}
        className="w-full rounded bg-tide px-4 py-2 font-medium text-white hover:bg-tide-dark disabled:opacity-60">
        {busy ? 'Saving…' : submitLabel}
      </button>
    </form>
  );
}
