import Link from 'next/link';

/** The app's own "not found" words, for the 404 page inside the signed-in shell and the one outside it. */
export function NotFoundNotice() {
  return (
    <section className="mx-auto max-w-xl space-y-3 py-10" data-testid="not-found">
      <p className="font-mono text-xs uppercase tracking-widest text-ink-faint">404 · not found</p>
      <h1 className="text-xl font-semibold">Nothing is registered at this address</h1>
      <p className="text-sm text-ink-soft">
        The series, site, alert or page it names does not exist, or its address was mistyped. A retired series keeps its address; a slug that was never
        registered has none.
      </p>
      <p className="flex flex-wrap gap-4 text-sm">
        <Link href="/" className="text-tide hover:underline">
          Overview
        </Link>
        <Link href="/sites" className="text-tide hover:underline">
          Sites
        </Link>
        <Link href="/alerts" className="text-tide hover:underline">
          Alerts
        </Link>
      </p>
    </section>
  );
}
