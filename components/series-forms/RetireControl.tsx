'use client';

import { useMutation } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { api } from '@/components/api';
import { ErrorNote } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { failureText } from './form-parts';

/**
 * Retires a series (no more intake, analysis or alerts; it leaves the overview) or restores it. Its data, rules,
 * alerts and history are kept either way.
 */
export function RetireControl({ slug, retired }: { slug: string; retired: boolean }) {
  const router = useRouter();
  const change = useMutation({
    mutationFn: () => api(`/api/series/${slug}`, { method: 'PATCH', body: { retired: !retired } }),
    onSuccess: () => router.refresh(),
  });
  return (
    <div className="space-y-2" data-testid="retire-control">
      <p className="text-sm text-ink-soft">
        {retired
          ? 'This series is retired: it takes no data, is not analysed and is left off the overview. Restoring it brings it back with everything it had.'
          : 'Retiring stops intake, analysis and alerts for this series and takes it off the overview. Its observations, rules, alerts and history are kept, and it can be restored at any time.'}
      </p>
      <Button variant={retired ? 'secondary' : 'danger'} disabled={change.isPending} onClick={() => change.mutate()}>
        {retired ? 'Restore the series' : 'Retire the series'}
      </Button>
      {change.isError ? <ErrorNote>Not changed. {failureText(change.error)}</ErrorNote> : null}
    </div>
  );
}
