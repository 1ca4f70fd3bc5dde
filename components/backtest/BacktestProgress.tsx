'use client';

import { useMutation, useQueryClient } from '@tanstack/react-query';
import { api } from '@/components/api';
import { Button } from '@/components/ui/Button';
import type { BacktestJobRecord } from '@/lib/backtest/jobs';

/** A queued or running backtest: how far it has come, and (for those who may run one) a way to stop it. */
export function BacktestProgress({ job, slug, canCancel }: { job: BacktestJobRecord; slug: string; canCancel: boolean }) {
  const client = useQueryClient();
  const cancel = useMutation({
    mutationFn: (id: number) => api(`/api/backtests/${id}/cancel`, { method: 'POST' }),
    onSuccess: () => {
      void client.invalidateQueries({ queryKey: ['backtest', job.id] });
      void client.invalidateQueries({ queryKey: ['backtests', slug] });
    },
  });
  return (
    <div className="mt-3 flex items-center gap-3">
      <progress className="h-3 w-64" max={1} value={job.progress} aria-label="Backtest progress">
        {Math.round(job.progress * 100)} %
      </progress>
      <span className="text-sm text-ink-soft" role="status" aria-live="polite">
        {job.status === 'queued' ? 'Waiting for the scheduler…' : `${Math.round(job.progress * 100)} % done`}
        {job.cancelRequested ? ' · stopping' : ''}
      </span>
      {canCancel ? (
        <Button onClick={() => cancel.mutate(job.id)} disabled={cancel.isPending || job.cancelRequested}>
          Cancel
        </Button>
      ) : null}
    </div>
  );
}
