'use client';

import { useMutation } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { api, ApiError } from '@/components/api';
import { ErrorNote } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';

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
export function AlertActions({
  alertId,
  version,
  actions,
  users,
}: {
  alertId: number;
  version: number;
  actions: string[];
  users: { id: number; name: string }[] | null;
}) {
  const router = useRouter();
  const [dismissing, setDismissing] = useState(false);
  const [reason, setReason] = useState('');
  const [note, setNote] = useState('');
  const [assignee, setAssignee] = useState('');
  const triage = useMutation({
    mutationFn: (body: Record<string, unknown>) => api(`/api/alerts/${alertId}/actions`, { method: 'POST', body: { ...body, version } }),
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
  if (actions.length === 0)
    return (
      <p className="text-sm text-ink-soft" data-testid="no-actions">
        No actions are open to your role on this alert.
      </p>
    );
  return (
    <div className="space-y-3" data-testid="alert-actions">
      <div className="flex flex-wrap gap-2">
        {visible.map((action) => (
          <Button
            key={action}
            disabled={triage.isPending}
            variant={action === 'dismiss' || action === 'reopen' ? 'secondary' : 'primary'}
            onClick={() => (action === 'dismiss' ? setDismissing(true) : triage.mutate({ action }))}
          >
            {LABELS[action]}
          </Button>
        ))}
      </div>
      {actions.includes('assign') && users ? (
        <form
          className="flex flex-wrap items-end gap-2"
          onSubmit={(e) => {
            e.preventDefault();
            if (assignee) triage.mutate({ action: 'assign', assignee: Number(assignee) });
          }}
        >
          <Field label="Assign to" tone="filter">
            <select value={assignee} onChange={(e) => setAssignee(e.target.value)} className={CONTROL}>
              <option value="">Choose a colleague</option>
              {users.map((u) => (
                <option key={u.id} value={u.id}>
                  {u.name}
                </option>
              ))}
            </select>
          </Field>
          <Button type="submit" disabled={!assignee}>
            Assign
          </Button>
        </form>
      ) : null}
      {dismissing ? (
        <form
          className="space-y-2 rounded border border-rule p-3"
          onSubmit={(e) => {
            e.preventDefault();
            triage.mutate({ action: 'dismiss', reason, note: note.trim() || undefined });
          }}
        >
          <Field label="Why is it set aside?">
            <select required value={reason} onChange={(e) => setReason(e.target.value)} className={`${CONTROL} w-full`}>
              <option value="">Choose a reason</option>
              {REASONS.map((r) => (
                <option key={r.value} value={r.value}>
                  {r.label}
                </option>
              ))}
            </select>
          </Field>
          <Field label={`Note ${reason === 'other' ? '(required)' : '(optional)'}`}>
            <textarea value={note} onChange={(e) => setNote(e.target.value)} rows={2} className={`${CONTROL} w-full`} />
          </Field>
          <div className="flex gap-2">
            <Button type="submit" variant="primary" disabled={!reason || (reason === 'other' && !note.trim())}>
              Set aside
            </Button>
            <Button onClick={() => setDismissing(false)}>Cancel</Button>
          </div>
        </form>
      ) : null}
      {triage.isError ? (
        <ErrorNote>
          {triage.error instanceof ApiError && triage.error.status === 409
            ? 'A colleague changed this alert meanwhile; the page now shows its current state.'
            : triage.error.message}
        </ErrorNote>
      ) : null}
    </div>
  );
}
