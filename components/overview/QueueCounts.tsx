import Link from 'next/link';
import type { QueueCounts as Counts } from '@/lib/overview';

const QUEUES: { key: keyof Counts; label: string; href: string }[] = [
  { key: 'triage', label: 'Waiting for triage', href: '/alerts?queue=triage' },
  { key: 'escalated', label: 'Escalated to leads', href: '/alerts?queue=escalated' },
  { key: 'mine', label: 'Assigned to me', href: '/alerts?queue=mine' },
];

/** Open alerts by queue, each a link into that queue. */
export function QueueCounts({ counts }: { counts: Counts }) {
  return (
    <ul className="grid grid-cols-1 gap-3 sm:grid-cols-3" aria-label="Open alerts by queue">
      {QUEUES.map((q) => (
        <li key={q.key}>
          <Link href={q.href} data-queue={q.key} className="block rounded-lg border border-rule bg-card px-4 py-3 shadow-sm hover:border-tide">
            <span className="num block text-2xl font-semibold">{counts[q.key]}</span>
            <span className="text-sm text-ink-soft">{q.label}</span>
          </Link>
        </li>
      ))}
    </ul>
  );
}
