'use client';

import { useMutation } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { api, ApiError } from '@/components/api';
import { ErrorNote } from '@/components/States';

const LABELS: Record<string, string> = {
  acknowledge: 'Take this alert',
  escalate: 'Escalate to a lead',
  confirm: 'Confirm as a real warning',
  dismiss: 'Set aside…',
  reopen: 'Reopen',
};

const REASONS: { value: string; label: string }[] = [
  { value: 'instrument-fault', label: 'Instrument fault' },
  { value: 'data-gap-or-artefact', label: 'Data gap or artefact' },
  { value: 'seasonal-or-external-forcing', label: 'Seasonal or external forcing' },
  { value: 'statistical-fluke', label: 'Statistical fluke' },
  { value: 'other', label: 'Other (say why in the note)' },
];

/** Only the actions the server says this role may take now; the server checks again on every request. */
export function AlertActions({ alertId, version, actions, users }: { alertId: number; version: number; actions: string[]; users: { id: number; name: string }[] | null }) {
  const router = useRouter();
  const [dismissing, setDismissing] = useState(false);
  const [reason, setReason] = useState('');
  const [note, setNote] = useState('');
  const [assignee, setAssignee] = useState('');
  const transition = useMutation({
    mutationFn: (body: Record<string, unknown>) => api(`/api/alerts/${alertId}/transitions`, { method: 'POST', body: { ...body, version } }),
    onSuccess: () => {
      setDismissing(false);
      setNote('');
      router.refresh();
    },
    onError: (error) => {
      if (error instanceof ApiError && error.status === 409) router.refresh();
    },
  });
  const visible = actions.filter((a) => a !== 'assign' && LABELS[a]);
  if (actions.length === 0) return <p className="text-sm text-ink-soft" data-testid="no-actions">No actions are open to your role on this alert.</p>;
  return (
    <div className="space-y-3" data-testid="alert-actions">
      <div className="flex flex-wrap gap-2">
        {visible.map((action) => (
          <button key={action} type="button" disabled={transition.isPending}
            onClick={() => (action === 'dismiss' ? setDismissing(true) : transition.mutate({ action }))}
            className={action === 'dismiss' || action === 'reopen'
              ? 'rounded border border-rule px-3 py-1.5 text-sm hover:bg-paper'
              : 'rounded bg-tide px-3 py-1.5 text-sm font-medium text-white hover:bg-tide-dark disabled:opacity-50'}>
            {LABELS[action]}
          </button>
        ))}
      </div>
      {actions.includes('assign') && users ? (
        <form className="flex flex-wrap items-end gap-2" onSubmit={(e) => {
          e.preventDefault();
          if (assignee) transition.mutate({ action: 'assign', assignee: Number(assignee) });
        }}>
          <label className="flex flex-col text-xs font-medium text-ink-soft">
            Assign to
            <select value={assignee} onChange={(e) => setAssignee(e.target.value)} className="mt-1 rounded border border-rule bg-card px-2 py-1.5 text-sm">
              <option value="">Choose a colleague</option>
              {users.map((u) => <option key={u.id} value={u.id}>{u.name}</option>)}
            </select>
          </label>
          <button type="submit" disabled={!assignee} className="rounded border border-rule px-3 py-1.5 text-sm hover:bg-paper disabled:opacity-50">Assign</button>
        </form>
      ) : null}
      {dismissing ? (
        <form className="space-y-2 rounded border border-rule p-3" onSubmit={(e) => {
          e.preventDefault();
          transition.mutate({ action: 'dismiss', reason, note: note.trim() || undefined });
        }}>
          <label className="block text-sm font-medium">
            Why is it set aside?
            <select required value={reason} onChange={(e) => setReason(e.target.value)} className="mt-1 w-full rounded border border-rule bg-card px-2 py-1.5 text-sm">
              <option value="">Choose a reason</option>
              {REASONS.map((r) => <option key={r.value} value={r.value}>{r.label}</option>)}
            </select>
          </label>
          <label className="block text-sm font-medium">
            Note {reason === 'other' ? '(required)' : '(optional)'}
            <textarea value={note} onChange={(e) => setNote(e.target.value)} rows={2} className="mt-1 w-full rounded border border-rule bg-card px-2 py-1.5 text-sm" />
          </label>
          <div className="flex gap-2">
            <button type="submit" disabled={!reason || (reason === 'other' && !note.trim())} className="rounded bg-tide px-3 py-1.5 text-sm font-medium text-white disabled:opacity-50">Set aside</button>
            <button type="button" onClick={() => setDismissing(false)} className="rounded border border-rule px-3 py-1.5 text-sm">Cancel</button>
          </div>
        </form>
      ) : null}
      {transition.isError ? (
        <ErrorNote>
          {transition.error instanceof ApiError && transition.error.status === 409
            ? 'A colleague changed this alert meanwhile; the page now shows its current state.'
            : transition.error.message}
        </ErrorNote>
      ) : null}
    </div>
  );
}
