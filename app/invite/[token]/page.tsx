import { SetPasswordForm } from '@/components/SetPasswordForm';

export const metadata = { title: 'Accept invitation' };

export default async function InvitePage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  return (
    <main className="mx-auto flex min-h-screen max-w-md flex-col justify-center gap-6 px-4">
      <div>
        <p className="font-mono text-xs uppercase tracking-widest text-tide">Brinkwatch</p>
        <h1 className="mt-1 text-2xl font-semibold">Choose a password to join</h1>
        <p className="mt-2 text-sm text-ink-soft">Your account becomes active once the password is set. The link works once.</p>
      </div>
      <div className="rounded-lg border border-rule bg-card p-6 shadow-sm">
        <SetPasswordForm endpoint={`/api/invitations/${encodeURIComponent(token)}/accept`} submitLabel="Activate my account" />
      </div>
    </main>
  );
}
