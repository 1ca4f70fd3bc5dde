import type { InputHTMLAttributes } from 'react';
import { Button } from './ui/Button';
import { CONTROL, Field } from './ui/Field';

/** A labelled input (named after its id, required) as the sign-in and set-password forms use it. */
export function LabelledInput({ id, label, hint, ...input }: { id: string; label: string; hint?: string } & InputHTMLAttributes<HTMLInputElement>) {
  return (
    <Field label={label} hint={hint}>
      <input id={id} name={id} required {...input} className={`${CONTROL} w-full`} />
    </Field>
  );
}

/** The error line and the full-width submit button shared by those forms. */
export function FormFooter({ error, busy, busyLabel, label }: { error: string | null; busy: boolean; busyLabel: string; label: string }) {
  return (
    <>
      {error && (
        <p role="alert" className="rounded bg-warning-light px-3 py-2 text-sm text-warning">
          {error}
        </p>
      )}
      <Button type="submit" variant="primary" size="lg" disabled={busy} className="w-full">
        {busy ? busyLabel : label}
      </Button>
    </>
  );
}
