import type { InputHTMLAttributes } from 'react';

/** A labelled input (named after its id, required) as the sign-in and set-password forms use it. */
export function LabelledInput({ id, label, hint, ...input }: { id: string; label: string; hint?: string } & InputHTMLAttributes<HTMLInputElement>) {
  return (
    <div>
      <label htmlFor={id} className="block text-sm font-medium">{label}</label>
      <input id={id} name={id} required {...input} className="mt-1 w-full rounded border border-rule bg-card px-3 py-2" />
      {hint && <p className="mt-1 text-xs text-ink-soft">{hint}</p>}
    </div>
  );
}

/** The error line and the full-width submit button shared by those forms. */
export function FormFooter({ error, busy, busyLabel, label }: { error: string | null; busy: boolean; busyLabel: string; label: string }) {
  return (
    <>
      {error && <p role="alert" className="rounded bg-warning-light px-3 py-2 text-sm text-warning">{error}</p>}
      <button type="submit" disabled={busy}
        className="w-full rounded bg-tide px-4 py-2 font-medium text-white hover:bg-tide-dark disabled:opacity-60">
        {busy ? busyLabel : label}
      </button>
    </>
  );
}
