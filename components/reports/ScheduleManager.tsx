'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState, type FormEvent } from 'react';
import { api, ApiError } from '@/components/api';
import { Empty, ErrorNote, Loading, Panel } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import { CONTROL, Field } from '@/components/ui/Field';
import type { ReportScheduleView } from '@/lib/reports/schedules-view';
import { SiteNameSelect } from '@/components/sites/SiteNameSelect';

const KEY = ['report-schedules'];

/**
 * A lead's scheduled reports: who receives which report (network or site, monthly or quarterly). Addresses need no
 * account; each message carries its own unsubscribe link. Reports go out after each whole period ends.
 */
export function ScheduleManager({ sites }: { sites: string[] }) {
  const client = useQueryClient();
  const list = useQuery({ queryKey: KEY, queryFn: () => api<{ items: ReportScheduleView[] }>('/api/reports/schedules') });
  const [name, setName] = useState('');
  const [site, setSite] = useState('');
  const [cadence, setCadence] = useState<'monthly' | 'quarterly'>('quarterly');
  const [recipients, setRecipients] = useState('');
  const create = useMutation({
    mutationFn: () =>
      api<ReportScheduleView>('/api/reports/schedules', {
        method: 'POST',
        body: { name, site, cadence, recipients: recipients.split(/[\s,;]+/).filter(Boolean) },
      }),
    onSuccess: () => {
      setName('');
      setRecipients('');
      return client.invalidateQueries({ queryKey: KEY });
    },
  });
  const change = useMutation({
    mutationFn: ({ id, body }: { id: number; body?: { active: boolean } }) =>
      api(`/api/reports/schedules/${id}`, body ? { method: 'PATCH', body } : { method: 'DELETE' }),
    onSuccess: () => client.invalidateQueries({ queryKey: KEY }),
  });
  const fields = create.error instanceof ApiError ? (create.error.fields ?? {}) : {};

  const submit = (event: FormEvent) => {
    event.preventDefault();
    create.mutate();
  };

  return (
    <div className="no-print">
      <Panel title="Scheduled reports" id="schedules">
        {list.isError ? (
          <ErrorNote error={list.error} />
        ) : !list.data ? (
          <Loading />
        ) : list.data.items.length === 0 ? (
          <Empty>No scheduled reports yet.</Empty>
        ) : (
          <DataTable
            caption="Scheduled reports"
            frame="plain"
            className="text-sm"
            testId="schedule-table"
            columns={['Name', 'Covers', 'Every', 'Recipients', 'State', { label: 'Actions', srOnly: true }]}
          >
            {list.data.items.map((s) => (
              <tr key={s.id}>
                <th scope="row" className={`${CELL_TIGHT} text-left font-medium`}>
                  {s.name}
                </th>
                <td className={CELL_TIGHT}>{s.site || 'whole network'}</td>
                <td className={CELL_TIGHT}>{s.cadence === 'monthly' ? 'month' : 'quarter'}</td>
                <td className={`${CELL_TIGHT} break-all`}>{s.recipients.join(', ') || 'nobody (all unsubscribed)'}</td>
                <td className={CELL_TIGHT}>{s.active ? 'active' : 'paused'}</td>
                <td className={`${CELL_TIGHT} whitespace-nowrap`}>
                  <Button size="sm" variant="quiet" onClick={() => change.mutate({ id: s.id, body: { active: !s.active } })}>
                    {s.active ? 'Pause' : 'Resume'}
                  </Button>
                  <Button size="sm" variant="danger" onClick={() => change.mutate({ id: s.id })}>
                    Delete
                  </Button>
                </td>
              </tr>
            ))}
          </DataTable>
        )}
        {change.isError ? <ErrorNote error={change.error}>The change was not saved.</ErrorNote> : null}
        <form onSubmit={submit} className="mt-4 grid gap-3 sm:grid-cols-2" data-testid="schedule-form">
          <Field label="Name" error={fields.name?.[0]}>
            <input className={CONTROL} value={name} onChange={(e) => setName(e.target.value)} required placeholder="Quarterly report to the water authority" />
          </Field>
          <Field label="Covers">
            <SiteNameSelect sites={sites} value={site} onChange={setSite} anyLabel="Whole network" />
          </Field>
          <Field label="Every">
            <select className={CONTROL} value={cadence} onChange={(e) => setCadence(e.target.value as 'monthly' | 'quarterly')}>
              <option value="quarterly">Quarter (sent after each quarter ends)</option>
              <option value="monthly">Month (sent after each month ends)</option>
            </select>
          </Field>
          <Field
            label="Recipients"
            hint="E-mail addresses, separated by commas or spaces; they need no account."
            error={fields.recipients?.[0] ?? Object.entries(fields).find(([k]) => k.startsWith('recipients.'))?.[1]?.[0]}
          >
            <textarea className={CONTROL} value={recipients} onChange={(e) => setRecipients(e.target.value)} required rows={2} />
          </Field>
          <div className="sm:col-span-2">
            <Button type="submit" variant="primary" disabled={create.isPending}>
              {create.isPending ? 'Saving…' : 'Add schedule'}
            </Button>
            {create.isError && !Object.keys(fields).length ? <ErrorNote error={create.error}>The schedule was not saved.</ErrorNote> : null}
          </div>
        </form>
      </Panel>
    </div>
  );
}
