'use client';

import { useQuery } from '@tanstack/react-query';
import { api } from '@/components/api';
import { healthNotices } from '@/lib/display/health-notices';
import type { HealthReport } from '@/lib/runtime/health';

/** Asked this often, so a scheduler that stops shows up within a minute on an open screen. */
const CHECK_EVERY_MS = 30_000;

/**
 * A band under the header that appears only when the service itself needs attention (see `healthNotices`),
 * checked in the browser so no page waits for it. The health answer is read on 503 too: that is when it matters.
 */
export function SystemStatus() {
  const health = useQuery({
    queryKey: ['health'],
    queryFn: async ({ signal }) => {
      const report = await api<HealthReport>('/api/health', { signal, answers: [503] });
      return { report, at: Date.now() };
    },
    refetchInterval: CHECK_EVERY_MS,
    retry: 2,
  });
  if (health.isPending) return null;
  const notices = health.isError
    ? [{ key: 'unreachable', text: 'The server did not answer its health check; what you see may be out of date.' }]
    : healthNotices(health.data.report, health.data.at);
  if (notices.length === 0) return null;
  return (
    <div role="alert" data-testid="system-status" className="no-print border-b border-warning bg-warning-light">
      <ul className="mx-auto max-w-7xl space-y-0.5 px-4 py-2 text-sm text-warning">
        {notices.map((notice) => (
          <li key={notice.key} data-notice={notice.key}>
            <span aria-hidden="true">✕ </span>
            {notice.text}
          </li>
        ))}
      </ul>
    </div>
  );
}
