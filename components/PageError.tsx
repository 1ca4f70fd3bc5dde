'use client';

import Link from 'next/link';
import { Button } from '@/components/ui/Button';

/**
 * What a signed-in page says when preparing it failed. The server's own error text and stack never reach the
 * browser (Next replaces them by a reference, `digest`, that the server log carries beside the full error); an
 * error raised in the browser shows its message.
 */
export function PageError({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <section role="alert" className="mx-auto max-w-xl space-y-3 py-10" data-testid="page-error">
      <p className="font-mono text-xs uppercase tracking-widest text-warning">Error</p>
      <h1 className="text-xl font-semibold">This page could not be shown</h1>
      <p className="text-sm text-ink-soft">
        {error.digest
          ? `Reading or preparing its data failed on the server. The failure is in the server log under reference ${error.digest}; give that reference to your administrator.`
          : `Drawing it in the browser failed: ${error.message}`}
      </p>
      <div className="flex flex-wrap items-center gap-4">
        <Button variant="primary" onClick={reset}>
          Try again
        </Button>
        <Link href="/" className="text-sm text-tide hover:underline">
          Overview
        </Link>
      </div>
    </section>
  );
}
