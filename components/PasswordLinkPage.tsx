import { SetPasswordForm } from './SetPasswordForm';

/** The public page behind a mailed link (invitation or reset): a heading, what the link does, the password form. */
export function PasswordLinkPage({ heading, hint, endpoint, submitLabel }: { heading: string; hint: string; endpoint: string; submitLabel: string }) {
  return (
    <main className="mx-auto flex min-h-screen max-w-md flex-col justify-center gap-6 px-4">
      <div>
        <p className="font-mono text-xs uppercase tracking-widest text-tide">Brinkwatch</p>
        <h1 className="mt-1 text-2xl font-semibold">{heading}</h1>
        <p className="mt-2 text-sm text-ink-soft">{hint}</p>
      </div>
      <div className="rounded-lg border border-rule bg-card p-6 shadow-sm">
        <SetPasswordForm endpoint={endpoint} submitLabel={submitLabel} />
      </div>
    </main>
  );
}
