'use client';

import Link from 'next/link';
import { usePathname } from 'next/navigation';

const LINKS = [
  { href: '/admin', label: 'Users' },
  { href: '/admin/tokens', label: 'Ingest tokens' },
  { href: '/admin/mail', label: 'Outbox and mailbox' },
  { href: '/admin/webhooks', label: 'Webhooks' },
  { href: '/admin/audit', label: 'Audit log' },
];

export function AdminNav() {
  const pathname = usePathname();
  return (
    <nav aria-label="Administration" className="flex flex-wrap gap-1 border-b border-rule pb-2">
      {LINKS.map((link) => {
        const current = pathname === link.href;
        return (
          <Link
            key={link.href}
            href={link.href}
            aria-current={current ? 'page' : undefined}
            className={`rounded px-3 py-1.5 text-sm ${current ? 'bg-tide text-white' : 'hover:bg-tide-light'}`}
          >
            {link.label}
          </Link>
        );
      })}
    </nav>
  );
}
