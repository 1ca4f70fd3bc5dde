'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { api } from '@/components/api';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { formatLocal } from '@/lib/display/format';
import { parseInstantParam } from '@/lib/intake/time-formats';
import type { TransitionRecord } from '@/lib/backtest/marks';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';

/** Known transitions of a series: listed for everyone, marked and removed by leads. */
export function TransitionList({ slug, timeZone, canEdit }: { slug: string; timeZone: string; canEdit: boolean }) {
  const client = useQueryClient();
  const key = ['transitions', slug];
  const list = useQuery({ queryKey: key, queryFn: () => api<{ transitions: TransitionRecord[] }>(`/api/series/${slug}/transitions`) });
  const [at, setAt] = useState('');
  const [note, setNote] = useState('');
  // The instant is typed as the series' wall-clock time, like every time shown on this page.
  const instant = at ? parseInstantParam(at, timeZone) : null;
  const refresh = () => void client.invalidateQueries({ queryKey: key });
  const add = useMutation({
    mutationFn: (t: number) => api(`/api/series/${slug}/transitions`, { method: 'POST', body: { at: new Date(t).toISOString(), note } }),
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
                <Button variant="danger" size="sm" className="ml-auto" onClick={() => remove.mutate(t.id)} disabled={remove.isPending} aria-label={`Remove the transition of ${formatLocal(t.at, timeZone)}`}>
                  Remove
                </Button>
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
            if (instant?.ok) add.mutate(instant.t);
          }}
        >
          <Field label={`Instant (${timeZone})`} error={instant && !instant.ok ? instant.reason : null}>
            <input type="datetime-local" required className={CONTROL} value={at} onChange={(e) => setAt(e.target.value)} />
          </Field>
          <Field label="Note" className="flex-1">
            <input type="text" maxLength={2000} className={CONTROL} value={note} onChange={(e) => setNote(e.target.value)} placeholder="What happened, and how it is known" />
          </Field>
          <Button type="submit" disabled={add.isPending || !instant?.ok}>
            Mark transition
          </Button>
        </form>
      ) : null}
      {add.error ? <ErrorNote error={add.error}>The transition could not be saved.</ErrorNote> : null}
      {remove.error ? <ErrorNote error={remove.error}>The transition could not be removed.</ErrorNote> : null}
    </div>
  );
}
