'use client';

import { useMutation } from '@tanstack/react-query';
import { useRouter } from 'next/navigation';
import { useState } from 'react';
import { api } from '@/components/api';
import { LocalTime } from '@/components/LocalTime';
import { Empty, ErrorNote } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';

export interface NoteItem {
  id: number;
  body: string;
  author: { id: number; name: string } | null;
  createdAt: string;
  edited: boolean;
}

/** The alert's notes, oldest first; analysts and above add to them. */
export function AlertNotes({ alertId, notes, canWrite, timeZone }: { alertId: number; notes: NoteItem[]; canWrite: boolean; timeZone: string }) {
  const router = useRouter();
  const [body, setBody] = useState('');
  const add = useMutation({
    mutationFn: (text: string) => api(`/api/alerts/${alertId}/notes`, { method: 'POST', body: { body: text } }),
    onSuccess: () => {
      setBody('');
      router.refresh();
    },
  });
  return (
    <div className="space-y-3">
      {notes.length === 0 ? (
        <Empty>No notes yet.</Empty>
      ) : (
        <ul className="space-y-2" data-testid="notes">
          {notes.map((n) => (
            <li key={n.id} className="rounded border border-rule p-2 text-sm">
              <div className="mb-1 flex flex-wrap gap-2 text-xs text-ink-soft">
                <span className="font-medium text-ink">{n.author?.name ?? 'former user'}</span>
                <LocalTime t={n.createdAt} timeZone={timeZone} withZone />
                {n.edited ? <span>(edited)</span> : null}
              </div>
              <p className="whitespace-pre-wrap">{n.body}</p>
            </li>
          ))}
        </ul>
      )}
      {canWrite ? (
        <form
          onSubmit={(e) => {
            e.preventDefault();
            if (body.trim()) add.mutate(body.trim());
          }}
          className="space-y-2"
        >
          <Field label="Add a note">
            <textarea value={body} onChange={(e) => setBody(e.target.value)} rows={3} className={`${CONTROL} w-full`} />
          </Field>
          <Button type="submit" variant="primary" disabled={!body.trim() || add.isPending}>
            {add.isPending ? 'Adding…' : 'Add note'}
          </Button>
          {add.isError ? <ErrorNote error={add.error}>Not added.</ErrorNote> : null}
        </form>
      ) : null}
    </div>
  );
}
