'use client';

import { useState } from 'react';
import { useMutation } from '@tanstack/react-query';
import { api, ApiError } from '@/components/api';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';
import { ReasonField, reasonBody } from '@/components/ui/ReasonField';
import type { QcConfig } from '@/lib/schemas/quality';

type Draft = Record<string, string>;

const NUMBER_FIELDS: { test: string; fields: { key: string; label: string }[] }[] = [
  {
    test: 'Gross range: outside the sensor limits fails, outside the user limits is suspect',
    fields: [
      { key: 'failMin', label: 'sensor min' },
      { key: 'failMax', label: 'sensor max' },
      { key: 'suspectMin', label: 'user min' },
      { key: 'suspectMax', label: 'user max' },
    ],
  },
  {
    test: 'Spike: |xₙ − (xₙ₋₁ + xₙ₊₁)/2| above a threshold',
    fields: [
      { key: 'spikeSuspect', label: 'suspect above' },
      { key: 'spikeFail', label: 'fail above' },
    ],
  },
  {
    test: 'Rate of change: a step beyond N standard deviations of the preceding period is suspect',
    fields: [
      { key: 'rocDeviations', label: 'N deviations' },
      { key: 'rocHours', label: 'period (hours)' },
    ],
  },
  {
    test: 'Flat line: the last readings all within a tolerance of this one',
    fields: [
      { key: 'flatTolerance', label: 'tolerance' },
      { key: 'flatSuspect', label: 'suspect after (readings)' },
      { key: 'flatFail', label: 'fail after (readings)' },
    ],
  },
  {
    test: 'Sampling interval: a step off the expected interval is suspect',
    fields: [
      { key: 'intervalSeconds', label: 'expected (s; blank: the series’ interval)' },
      { key: 'intervalTolerance', label: 'tolerance (fraction)' },
    ],
  },
];

function draftOf(qc: QcConfig | null): Draft {
  const text = (n: number | undefined) => (n === undefined ? '' : String(n));
  return {
    failMin: text(qc?.grossRange?.fail[0]),
    failMax: text(qc?.grossRange?.fail[1]),
    suspectMin: text(qc?.grossRange?.suspect?.[0]),
    suspectMax: text(qc?.grossRange?.suspect?.[1]),
    spikeSuspect: text(qc?.spike?.suspect),
    spikeFail: text(qc?.spike?.fail),
    rocDeviations: text(qc?.rateOfChange?.deviations),
    rocHours: text(qc?.rateOfChange?.periodHours),
    flatTolerance: text(qc?.flatLine?.tolerance),
    flatSuspect: text(qc?.flatLine?.suspect),
    flatFail: text(qc?.flatLine?.fail),
    intervalSeconds: text(qc?.samplingInterval?.expectedSeconds),
    intervalTolerance: qc?.samplingInterval ? text(qc.samplingInterval.tolerance) : '',
    suspectInAnalysis: qc?.suspectInAnalysis === false ? 'no' : 'yes',
  };
}

/** The settings to send: a test whose fields are all blank is off; the server's schema judges the rest. */
function settingsOf(d: Draft): Record<string, unknown> {
  const n = (key: string) => (d[key].trim() === '' ? undefined : Number(d[key]));
  const all = (...keys: string[]) => keys.every((key) => n(key) !== undefined);
  const qc: Record<string, unknown> = { suspectInAnalysis: d.suspectInAnalysis === 'yes' };
  if (all('failMin', 'failMax'))
    qc.grossRange = { fail: [n('failMin'), n('failMax')], ...(all('suspectMin', 'suspectMax') ? { suspect: [n('suspectMin'), n('suspectMax')] } : {}) };
  if (all('spikeSuspect', 'spikeFail')) qc.spike = { suspect: n('spikeSuspect'), fail: n('spikeFail') };
  if (all('rocDeviations', 'rocHours')) qc.rateOfChange = { deviations: n('rocDeviations'), periodHours: n('rocHours') };
  if (all('flatTolerance', 'flatSuspect', 'flatFail')) qc.flatLine = { tolerance: n('flatTolerance'), suspect: n('flatSuspect'), fail: n('flatFail') };
  if (all('intervalTolerance'))
    qc.samplingInterval = { tolerance: n('intervalTolerance'), ...(all('intervalSeconds') ? { expectedSeconds: n('intervalSeconds') } : {}) };
  return qc;
}

/**
 * A series' automatic quality-control tests (QARTOD definitions, see README): a lead sets them and re-runs them over
 * the stored record; others read them. New data is judged on arrival.
 */
export function QcSettings({ slug, initial, canEdit }: { slug: string; initial: QcConfig | null; canEdit: boolean }) {
  const [draft, setDraft] = useState<Draft>(() => draftOf(initial));
  const [reason, setReason] = useState('');
  const save = useMutation({
    mutationFn: () => api(`/api/series/${slug}`, { method: 'PATCH', body: { qc: settingsOf(draft), ...reasonBody(reason) } }),
    onSuccess: () => setReason(''),
  });
  const rerun = useMutation({
    mutationFn: () => api<{ points: number; changed: number; counts: Record<string, number> }>(`/api/series/${slug}/qc/rerun`, { method: 'POST' }),
  });
  const problems =
    save.error instanceof ApiError && save.error.fields
      ? Object.entries(save.error.fields).map(([field, messages]) => `${field.replace(/^qc\./, '')}: ${messages[0]}`)
      : [];
  const set = (key: string) => (event: { target: { value: string } }) => setDraft({ ...draft, [key]: event.target.value });
  return (
    <details className="rounded border border-rule bg-card p-4" data-testid="qc-settings">
      <summary className="cursor-pointer font-semibold">Quality-control tests</summary>
      <form
        className="mt-3 space-y-3"
        onSubmit={(event) => {
          event.preventDefault();
          save.mutate();
        }}
      >
        <p className="text-sm text-ink-soft">
          Each point gets a flag (1 pass, 3 suspect, 4 fail); failed points never enter the analysis. A test left blank does not run.
        </p>
        <fieldset disabled={!canEdit} className="space-y-3">
          {NUMBER_FIELDS.map(({ test, fields }) => (
            <div key={test}>
              <p className="text-sm font-medium">{test}</p>
              <div className="mt-1 flex flex-wrap gap-3">
                {fields.map((f) => (
                  <Field key={f.key} label={f.label} tone="filter">
                    <input className={`${CONTROL} w-36`} inputMode="decimal" value={draft[f.key]} onChange={set(f.key)} />
                  </Field>
                ))}
              </div>
            </div>
          ))}
          <Field label="Suspect points in the analysis">
            <select className={`${CONTROL} w-80`} value={draft.suspectInAnalysis} onChange={set('suspectInAnalysis')}>
              <option value="yes">analysed (marked on the record)</option>
              <option value="no">left out like failed points</option>
            </select>
          </Field>
          {/* Changing limits a series already has is a threshold change a reviewer asks about; first limits are not. */}
          {canEdit ? <ReasonField value={reason} onChange={setReason} required={initial !== null} /> : null}
        </fieldset>
        {problems.length ? (
          <ul className="text-xs text-warning" role="alert">
            {problems.map((p) => (
              <li key={p}>{p}</li>
            ))}
          </ul>
        ) : null}
        {save.isError && !problems.length ? (
          <p className="text-sm text-warning" role="alert">
            {save.error.message}
          </p>
        ) : null}
        {save.isSuccess ? (
          <p className="text-sm text-tide-dark" role="status">
            Saved. New data is judged with these tests; re-run them to judge the stored record.
          </p>
        ) : null}
        {rerun.isError ? (
          <p className="text-sm text-warning" role="alert">
            {rerun.error.message}
          </p>
        ) : null}
        {rerun.data ? (
          <p className="text-sm" role="status" data-testid="qc-rerun-result">
            {rerun.data.points.toLocaleString('en-US')} points judged, {rerun.data.changed.toLocaleString('en-US')} flags changed. Now:{' '}
            {Object.entries(rerun.data.counts)
              .map(([label, count]) => `${label} ${count.toLocaleString('en-US')}`)
              .join(' · ') || 'no points'}
            .
          </p>
        ) : null}
        {canEdit ? (
          <div className="flex gap-2">
            <Button type="submit" variant="primary" disabled={save.isPending}>
              {save.isPending ? 'Saving…' : 'Save tests'}
            </Button>
            <Button onClick={() => rerun.mutate()} disabled={rerun.isPending}>
              {rerun.isPending ? 'Re-running…' : 'Re-run over the stored record'}
            </Button>
          </div>
        ) : null}
      </form>
    </details>
  );
}
