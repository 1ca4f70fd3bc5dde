'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { api } from '@/components/api';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { formatLocal } from '@/lib/display/format';
import type { TransitionRecord } from '@/lib/backtest/marks';

/** Known transitions of a series: listed for everyone, marked and removed by leads. */
export function TransitionList({ slug, timeZone, canEdit }: { slug: string; timeZone: string; canEdit: boolean }) {
  const client = useQueryClient();
  const key = ['transitions', slug];
  const list = useQuery({ queryKey: key, queryFn: () => api<{ transitions: TransitionRecord[] }>(`/api/series/${slug}/transitions`) });
  const [at, setAt] = useState('');
  const [note, setNote] = useState('');
  const refresh = () => void client.invalidateQueries({ queryKey: key });
  const add = useMutation({
    mutationFn: () => api(`/api/series/${slug}/transitions`, { method: 'POST', body: { at: new Date(at).toISOString(), note } }),
    onSuccess: () => {
      setAt('');
      setNote('');
      refresh();
    },
  });
  const remove = useMutation({ mutationFn: (id: number) => api(`/api/transitions/${id}`, { method: 'DELETE' }), onSuccess: refresh });

  return (
    <div className="text-sm">
      <h3 className="mb-1 font-semibold">Known transitions</h3>
      {list.isLoading ? (
        <Loading label="Loading transitions…" />
      ) : list.error ? (
        <ErrorNote error={list.error} />
      ) : !list.data?.transitions.length ? (
        <Empty>No transitions are marked. Mark one to measure lead times against it.</Empty>
      ) : (
        <ul className="space-y-1">
          {list.data.transitions.map((t) => (
            <li key={t.id} className="flex flex-wrap items-baseline gap-2">
              <span className="num">{formatLocal(t.at, timeZone)}</span>
              <span className="text-ink-soft">{t.note}</span>
              {canEdit ? (
                <button type="button" className="ml-auto text-xs text-warning hover:underline" onClick={() => remove.mutate(t.id)} disabled={remove.isPending} aria-label={`Remove the transition of ${formatLocal(t.at, timeZone)}`}>
                  Remove
                </button>
              ) : null}
            </li>
          ))}
        </ul>
      )}
      {canEdit ? (
        <form
          className="mt-2 flex flex-wrap items-end gap-2"
          onSubmit={(e) => {
            e.preventDefault();
            if (at) add.mutate();
          }}
        >
          <label className="flex flex-col">
            Instant (your local time)
            <input type="datetime-local" required className="rounded border border-rule px-2 py-1" value={at} onChange={(e) => setAt(e.target.value)} />
          </label>
          <label className="flex flex-1 flex-col">
            Note
            <input type="text" maxLength={2000} className="rounded border border-rule px-2 py-1" value={note} onChange={(e) => setNote(e.target.value)} placeholder="What happened, and how it is known" />
          </label>
          <button type="submit" className="rounded border border-rule px-3 py-1 hover:bg-paper" disabled={add.isPending || !at}>
            Mark transition
          </button>
        </form>
      ) : null}
      {add.error ? <ErrorNote error={add.error}>The transition could not be saved.</ErrorNote> : null}
      {remove.error ? <ErrorNote error={remove.error}>The transition could not be removed.</ErrorNote> : null}
    </div>
  );
}
