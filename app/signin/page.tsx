import { Suspense } from 'react';
import { SignInForm } from '@/components/SignInForm';
import { Caution } from '@/components/Caution';

export const metadata = { title: 'Sign in' };

export default function SignInPage() {
  return (
    <main className="mx-auto flex min-h-screen max-w-md flex-col justify-center gap-6 px-4">
      <div>
        <p className="font-mono text-xs uppercase tracking-widest text-tide">Brinkwatch</p>
        <h1 className="mt-1 text-2xl font-semibold">Sign in to your monitoring desk</h1>
      </div>
      <div className="rounded-lg border border-rule bg-card p-6 shadow-sm">
        <Suspense fallback={<p>Loading…</p>}>
          <SignInForm />
        </Suspense>
      </div>
      <Caution compact />
    </main>
  );
}
