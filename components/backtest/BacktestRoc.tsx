'use client';

import { useMutation, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { CartesianGrid, Line, LineChart, ReferenceDot, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import { api } from '@/components/api';
import { ChartFrame } from '@/components/charts/ChartFrame';
import { useChartPalette } from '@/components/charts/theme';
import { ErrorNote } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';
import { ReasonField, reasonBody } from '@/components/ui/ReasonField';
import { formatTau } from '@/lib/display/format';
import type { BacktestResult } from '@/lib/backtest/run';

type Calibration = NonNullable<BacktestResult['calibration']>;

/**
 * Hit rate against false-alarm rate for each threshold on tau, from the simulated approaches; a threshold picked
 * here is marked on the curve and (for those who may) saved into the rule.
 */
export function BacktestRoc({
  calibration: cal,
  word,
  initialThreshold,
  slug,
  ruleId,
  jobId,
  currentThreshold,
  canSave,
}: {
  calibration: Calibration;
  /** the direction tau is read in, in words */
  word: string;
  initialThreshold: number;
  slug: string;
  ruleId: number;
  jobId: number;
  currentThreshold: number | null;
  canSave: boolean;
}) {
  const colours = useChartPalette();
  const client = useQueryClient();
  const [pick, setPick] = useState<number>(initialThreshold);
  const [reason, setReason] = useState('');
  const useThreshold = useMutation({
    mutationFn: (threshold: number) => api(`/api/rules/${ruleId}/threshold`, { method: 'POST', body: { threshold, jobId, ...reasonBody(reason) } }),
    onSuccess: () => {
      setReason('');
      void client.invalidateQueries({ queryKey: ['rules', slug] });
    },
  });
  const saved = useThreshold.isSuccess ? (useThreshold.variables ?? null) : null;
  return (
    <>
      <ChartFrame
        title="Hit rate against false-alarm rate"
        fileName="backtest-roc"
        testId="backtest-roc"
        legend={`each point is one threshold on τ ${word}; hit rate: share of simulated approaches to a fold (fitted to the record before the first tipping point) warned of within the horizon; false-alarm rate: share of simulated records without one that alarm in the same stretch`}
      >
        <ResponsiveContainer width="100%" height={260}>
          <LineChart data={cal.roc.filter((p) => p.hitRate !== null).map((p) => ({ ...p }))} margin={{ top: 8, right: 16, bottom: 16, left: 8 }}>
            <CartesianGrid stroke={colours.grid} />
            <XAxis dataKey="falseAlarmRate" type="number" domain={[0, 1]} label={{ value: 'false-alarm rate', position: 'insideBottom', offset: -8 }} />
            <YAxis dataKey="hitRate" type="number" domain={[0, 1]} label={{ value: 'hit rate', angle: -90, position: 'insideLeft' }} />
            <Tooltip formatter={(v) => (typeof v === 'number' ? v.toFixed(3) : String(v))} labelFormatter={() => ''} />
            <Line dataKey="hitRate" stroke={colours.tide} dot={{ r: 3 }} isAnimationActive={false} />
            {cal.roc
              .filter((p) => p.threshold === pick && p.hitRate !== null)
              .map((p) => (
                <ReferenceDot key="pick" x={p.falseAlarmRate} y={p.hitRate!} r={6} fill={colours.watch} stroke="none" />
              ))}
          </LineChart>
        </ResponsiveContainer>
        {cal.approaches ? (
          <p className="mt-1 text-xs text-ink-soft">
            {cal.approaches.replicates} simulated records of each kind. Fitted lag-1 memory without a fold: {cal.approaches.nullModel.phiStart.toFixed(3)}{' '}
            throughout; towards a fold: {cal.approaches.foldModel.phiStart.toFixed(3)} at the start, {cal.approaches.foldModel.phiEnd.toFixed(3)} at the end.
          </p>
        ) : null}
      </ChartFrame>

      <div className="flex flex-wrap items-end gap-3 text-sm">
        <Field label="τ threshold">
          <select className={CONTROL} value={pick} onChange={(e) => setPick(Number(e.target.value))}>
            {cal.roc.map((p) => (
              <option key={p.threshold} value={p.threshold}>
                τ {word} ≥ {p.threshold.toFixed(2)} — hits {p.hitRate === null ? '–' : `${Math.round(p.hitRate * 100)} %`}, false alarms{' '}
                {(p.falseAlarmRate * 100).toFixed(1)} %
              </option>
            ))}
          </select>
        </Field>
        {/* The backtest is recorded as the threshold's source; the lead's reason says why this point of the curve. */}
        {canSave ? <ReasonField className="min-w-72 flex-1" value={reason} onChange={setReason} required={false} /> : null}
        {canSave ? (
          <Button variant="primary" disabled={useThreshold.isPending || pick === currentThreshold} onClick={() => useThreshold.mutate(pick)}>
            {useThreshold.isPending ? 'Saving…' : 'Use this threshold'}
          </Button>
        ) : null}
        {saved !== null ? (
          <span role="status" className="text-calm">
            Saved τ ≥ {saved.toFixed(2)} into the rule.
          </span>
        ) : null}
        {currentThreshold !== null ? <span className="text-ink-soft">The rule now uses τ ≥ {formatTau(currentThreshold)}.</span> : null}
      </div>
      {useThreshold.error ? <ErrorNote error={useThreshold.error}>The threshold could not be saved.</ErrorNote> : null}
    </>
  );
}
