'use client';

import { useMutation } from '@tanstack/react-query';
import { api } from '@/components/api';
import { ErrorNote } from '@/components/States';
import { Button } from '@/components/ui/Button';

/** One click takes the address off the list; a link opened by a mail scanner (GET) changes nothing. */
export function UnsubscribeButton({ token }: { token: string }) {
  const stop = useMutation({
    mutationFn: () => api<{ address: string; removed: boolean }>(`/api/reports/unsubscribe/${encodeURIComponent(token)}`, { method: 'POST' }),
  });
  if (stop.isSuccess)
    return (
      <p role="status" data-testid="unsubscribed">
        Done: {stop.data.address} receives no more of these reports.
      </p>
    );
  return (
    <div className="space-y-2">
      <Button variant="primary" size="lg" onClick={() => stop.mutate()} disabled={stop.isPending}>
        {stop.isPending ? 'Stopping…' : 'Stop these reports'}
      </Button>
      {stop.isError ? <ErrorNote error={stop.error}>Could not unsubscribe.</ErrorNote> : null}
    </div>
  );
}
