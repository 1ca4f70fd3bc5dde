'use client';

import { useQuery, useQueryClient } from '@tanstack/react-query';
import { useEffect, useState } from 'react';
import { api } from '@/components/api';
import { Empty, ErrorNote, Loading, Panel } from '@/components/States';
import { CONTROL_BARE } from '@/components/ui/Field';
import { formatLocal } from '@/lib/display/format';
import type { BacktestJobRecord } from '@/lib/backtest/jobs';
import type { BacktestResult } from '@/lib/backtest/run';
import type { RuleRecord } from '@/lib/alerts/rules';
import { BacktestForm } from './BacktestForm';
import { BacktestProgress } from './BacktestProgress';
import { BacktestResults } from './BacktestResults';
import { MarkList } from '@/components/marks/MarkList';

type JobWithResult = BacktestJobRecord & { result?: BacktestResult | null };

/**
 * Start a backtest of one of the series' rules (BacktestForm), follow its progress (BacktestProgress), and read
 * its results (BacktestResults, with the ROC in BacktestRoc); this panel holds which backtest is shown.
 */
export function BacktestPanel({ slug, timeZone, canRun }: { slug: string; timeZone: string; canRun: boolean }) {
  const client = useQueryClient();
  const rules = useQuery({ queryKey: ['rules', slug], queryFn: () => api<{ items: RuleRecord[] }>(`/api/series/${slug}/rules`) });
  const list = useQuery({
    queryKey: ['backtests', slug],
    queryFn: () => api<{ backtests: BacktestJobRecord[] }>(`/api/backtests?series=${encodeURIComponent(slug)}`),
  });
  const [selected, setSelected] = useState<number | null>(null);
  const shownId = selected ?? list.data?.backtests[0]?.id ?? null;

  const job = useQuery({
    queryKey: ['backtest', shownId],
    enabled: shownId !== null,
    queryFn: () => api<JobWithResult>(`/api/backtests/${shownId}`),
    refetchInterval: (q) => (q.state.data && (q.state.data.status === 'queued' || q.state.data.status === 'running') ? 1000 : false),
  });

  const current = job.data;
  const running = current && (current.status === 'queued' || current.status === 'running');
  // The picker of past backtests shows each one's status: refresh it once the followed job has finished.
  const finishedStatus = current && !running ? current.status : null;
  useEffect(() => {
    if (finishedStatus) void client.invalidateQueries({ queryKey: ['backtests', slug] });
  }, [finishedStatus, client, slug]);

  return (
    <Panel title="Backtest" id="backtest">
      <p className="mb-3 max-w-3xl text-sm text-ink-soft">
        Replays a rule on this record as if the data had arrived point by point, and counts how early it would have warned before each marked tipping point and
        how often it would have raised an alarm with no tipping point near. A backtest is evidence of past performance, not a guarantee.
      </p>
      <MarkList slug={slug} timeZone={timeZone} canEdit={canRun} />
      {canRun ? <BacktestForm slug={slug} rules={rules.data?.items} onStarted={setSelected} /> : null}
      {rules.isLoading ? (
        <Loading label="Loading rules…" />
      ) : rules.error ? (
        <ErrorNote error={rules.error} />
      ) : !rules.data?.items.length ? (
        <Empty>This series has no rules to backtest yet.</Empty>
      ) : null}

      <div className="mt-4">
        {list.isLoading ? (
          <Loading label="Loading backtests…" />
        ) : list.error ? (
          <ErrorNote error={list.error} />
        ) : !list.data?.backtests.length ? (
          <Empty>No backtests of this series yet.</Empty>
        ) : (
          <label className="flex items-center gap-2 text-sm">
            Showing
            <select className={CONTROL_BARE} value={shownId ?? ''} onChange={(e) => setSelected(Number(e.target.value))}>
              {list.data.backtests.map((b) => (
                <option key={b.id} value={b.id}>
                  #{b.id} rule {b.ruleId} · {b.kind} · {b.status} · {formatLocal(new Date(b.createdAt).getTime(), timeZone)}
                </option>
              ))}
            </select>
          </label>
        )}
      </div>

      {shownId !== null && job.isLoading ? <Loading label="Loading backtest…" /> : null}
      {job.error ? <ErrorNote error={job.error} /> : null}
      {current && running ? <BacktestProgress job={current} slug={slug} canCancel={canRun} /> : null}
      {current?.status === 'failed' ? <ErrorNote>This backtest failed: {current.error}</ErrorNote> : null}
      {current?.status === 'cancelled' ? <p className="mt-3 text-sm text-ink-soft">This backtest was cancelled.</p> : null}
      {current?.status === 'succeeded' && current.result ? (
        <BacktestResults
          key={current.id}
          result={current.result}
          timeZone={timeZone}
          slug={slug}
          ruleId={current.ruleId}
          jobId={current.id}
          currentThreshold={rules.data?.items.find((r) => r.id === current.ruleId)?.minTau ?? null}
          canSave={canRun}
        />
      ) : null}
    </Panel>
  );
}
