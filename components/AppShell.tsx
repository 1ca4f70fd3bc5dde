import Link from 'next/link';
import type { ReactNode } from 'react';
import type { Actor } from '@/lib/auth/roles';
import { roleAtLeast } from '@/lib/auth/roles';
import { SignOutButton } from './SignOutButton';
import { SystemStatus } from './SystemStatus';

const NAV: { href: string; label: string; minRole: Actor['role'] }[] = [
  { href: '/', label: 'Overview', minRole: 'viewer' },
  { href: '/alerts', label: 'Alerts', minRole: 'viewer' },
  { href: '/sites', label: 'Sites', minRole: 'viewer' },
  { href: '/intake', label: 'Intake', minRole: 'viewer' },
  { href: '/reports', label: 'Reports', minRole: 'viewer' },
  { href: '/feeds', label: 'Feeds', minRole: 'viewer' },
  { href: '/admin', label: 'Admin', minRole: 'admin' },
  { href: '/account', label: 'Account', minRole: 'viewer' },
];

export function AppShell({ actor, children }: { actor: Actor; children: ReactNode }) {
  return (
    <div className="flex min-h-screen flex-col">
      <header className="no-print border-b border-rule bg-card">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center gap-x-6 gap-y-2 px-4 py-3">
          <Link href="/" className="font-mono text-sm font-semibold uppercase tracking-widest text-tide">
            Brinkwatch
          </Link>
          <nav aria-label="Main" className="flex flex-wrap gap-1">
            {NAV.filter((item) => roleAtLeast(actor.role, item.minRole)).map((item) => (
              <Link key={item.href} href={item.href} className="rounded px-3 py-1.5 text-sm hover:bg-tide-light">
                {item.label}
              </Link>
            ))}
          </nav>
          <div className="ml-auto flex items-center gap-3 text-sm">
            <span className="text-ink-soft">
              {actor.name} ·{' '}
              <span className="font-medium text-ink" data-testid="actor-role">
                {actor.role}
              </span>
            </span>
            <SignOutButton />
          </div>
        </div>
      </header>
      <SystemStatus />
      {/* The standing caution is part of each page that shows indicators (once, where they are read), not a footer. */}
      <main className="mx-auto w-full max-w-7xl flex-1 px-4 py-6">{children}</main>
    </div>
  );
}
