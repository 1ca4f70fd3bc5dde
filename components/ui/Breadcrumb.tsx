import Link from 'next/link';
import { Fragment } from 'react';

/** Where a page sits: the pages above it, linked, then the page itself in words. */
export function Breadcrumb({ trail, here }: { trail: readonly { href: string; label: string }[]; here: string }) {
  return (
    <nav aria-label="Breadcrumb" className="text-sm text-ink-soft">
      {trail.map((step) => (
        <Fragment key={step.href}>
          <Link href={step.href} className="text-tide hover:underline">
            {step.label}
          </Link>{' '}
          /{' '}
        </Fragment>
      ))}
      {here}
    </nav>
  );
}
