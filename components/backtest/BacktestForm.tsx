'use client';

import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { api } from '@/components/api';
import { ErrorNote } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';
import type { RuleRecord } from '@/lib/alerts/rules';
import { directionWord, ruleDirection } from './wording';
import { indicatorLabel } from '@/lib/display/analysis-labels';

/** The settings of a new backtest of one of the series' rules; `onStarted` gets the queued job. */
export function BacktestForm({ slug, rules, onStarted }: { slug: string; rules: RuleRecord[] | undefined; onStarted: (jobId: number) => void }) {
  const client = useQueryClient();
  const [ruleId, setRuleId] = useState<number | null>(null);
  const [every, setEvery] = useState(1);
  const [horizonDays, setHorizonDays] = useState<number | null>(null);
  const [surrogates, setSurrogates] = useState(100);
  const [method, setMethod] = useState<'ar1' | 'phase'>('ar1');
  const [calibrate, setCalibrate] = useState(true);
  const chosenRule = ruleId ?? rules?.[0]?.id ?? null;
  const start = useMutation({
    mutationFn: () =>
      api<{ jobId: number }>(`/api/rules/${chosenRule}/backtest`, {
        method: 'POST',
        body: { every, horizonDays, calibration: calibrate ? { surrogates, method } : null },
      }),
    onSuccess: ({ jobId }) => {
      onStarted(jobId);
      void client.invalidateQueries({ queryKey: ['backtests', slug] });
    },
  });
  return (
    <form
      className="mt-4 flex flex-wrap items-end gap-3 text-sm"
      onSubmit={(e) => {
        e.preventDefault();
        start.mutate();
      }}
    >
      <Field label="Rule">
        <select className={CONTROL} value={chosenRule ?? ''} onChange={(e) => setRuleId(Number(e.target.value))} disabled={!rules?.length}>
          {rules?.map((r) => (
            <option key={r.id} value={r.id}>
              #{r.id} {indicatorLabel(r.indicator)} τ ≥ {r.minTau} {directionWord(ruleDirection(r))} ({r.severity})
            </option>
          ))}
        </select>
      </Field>
      <Field label="Judge every (points)">
        <input type="number" min={1} className={`${CONTROL} w-28`} value={every} onChange={(e) => setEvery(Math.max(1, Number(e.target.value) || 1))} />
      </Field>
      <Field label="Warning horizon (days)">
        <input
          type="number"
          min={1}
          className={`${CONTROL} w-32`}
          placeholder="one window"
          value={horizonDays ?? ''}
          onChange={(e) => setHorizonDays(e.target.value === '' ? null : Math.max(1, Number(e.target.value) || 1))}
        />
      </Field>
      <label className="flex items-center gap-2">
        <input type="checkbox" checked={calibrate} onChange={(e) => setCalibrate(e.target.checked)} /> Calibrate on surrogates
      </label>
      {calibrate ? (
        <>
          <Field label="Surrogates">
            <input
              type="number"
              min={1}
              max={2000}
              className={`${CONTROL} w-24`}
              value={surrogates}
              onChange={(e) => setSurrogates(Math.min(2000, Math.max(1, Number(e.target.value) || 1)))}
            />
          </Field>
          <Field label="Kind">
            <select className={CONTROL} value={method} onChange={(e) => setMethod(e.target.value as 'ar1' | 'phase')}>
              <option value="ar1">AR(1)</option>
              <option value="phase">phase-randomised</option>
            </select>
          </Field>
        </>
      ) : null}
      <Button type="submit" variant="primary" disabled={chosenRule === null || start.isPending}>
        {start.isPending ? 'Queuing…' : 'Start backtest'}
      </Button>
      {start.error ? <ErrorNote error={start.error}>The backtest could not be started.</ErrorNote> : null}
    </form>
  );
}
