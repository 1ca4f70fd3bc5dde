import type { ReactNode } from 'react';

/** The three non-content states every widget has, worded and styled the same everywhere. */
export function Loading({ label = 'Loading…' }: { label?: string }) {
  return (
    <p role="status" aria-live="polite" className="flex items-center gap-2 py-6 text-sm text-ink-soft">
      <span aria-hidden="true" className="inline-block h-3 w-3 animate-spin rounded-full border-2 border-tide border-t-transparent" />
      {label}
    </p>
  );
}

export function Empty({ children }: { children: ReactNode }) {
  return <p className="rounded border border-dashed border-rule px-4 py-6 text-center text-sm text-ink-soft">{children}</p>;
}

export function ErrorNote({ error, children }: { error?: unknown; children?: ReactNode }) {
  const message = error instanceof Error ? error.message : error ? String(error) : null;
  return (
    <p role="alert" className="rounded bg-warning-light px-3 py-2 text-sm text-warning">
      <span aria-hidden="true">✕ </span>
      {children ?? 'This could not be loaded.'} {message}
    </p>
  );
}

export function Panel({ title, actions, children, id }: { title: string; actions?: ReactNode; children: ReactNode; id?: string }) {
  return (
    <section aria-labelledby={id ? `${id}-title` : undefined} className="rounded-lg border border-rule bg-card p-4 shadow-sm">
      <div className="mb-3 flex flex-wrap items-center gap-2">
        <h2 id={id ? `${id}-title` : undefined} className="text-base font-semibold">
          {title}
        </h2>
        {actions ? <div className="ml-auto flex flex-wrap gap-2">{actions}</div> : null}
      </div>
      {children}
    </section>
  );
}
