'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { api } from '@/components/api';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { formatLocal } from '@/lib/display/format';
import { parseInstantParam } from '@/lib/intake/time-formats';
import type { MarkRecord } from '@/lib/marks/read';
import { MARK_KINDS, MARK_KIND_LABELS, type MarkKind } from '@/lib/marks/kinds';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';

/**
 * Marks on a series' record, tipping points and maintenance breaks: listed for everyone, marked and removed by
 * leads. The live analysis starts after the latest of either; backtests score against tipping points only.
 */
export function MarkList({ slug, timeZone, canEdit }: { slug: string; timeZone: string; canEdit: boolean }) {
  const client = useQueryClient();
  const key = ['marks', slug];
  const list = useQuery({ queryKey: key, queryFn: () => api<{ marks: MarkRecord[] }>(`/api/series/${slug}/marks`) });
  const [at, setAt] = useState('');
  const [note, setNote] = useState('');
  const [kind, setKind] = useState<MarkKind>('tipping-point');
  // The instant is typed as the series' wall-clock time, like every time shown on this page.
  const instant = at ? parseInstantParam(at, timeZone) : null;
  const refresh = () => void client.invalidateQueries({ queryKey: key });
  const add = useMutation({
    mutationFn: (t: number) => api(`/api/series/${slug}/marks`, { method: 'POST', body: { at: new Date(t).toISOString(), note, kind } }),
    onSuccess: () => {
      setAt('');
      setNote('');
      refresh();
    },
  });
  const remove = useMutation({ mutationFn: (id: number) => api(`/api/marks/${id}`, { method: 'DELETE' }), onSuccess: refresh });

  return (
    <div className="text-sm">
      <h3 className="mb-1 font-semibold">Marks: tipping points and maintenance breaks</h3>
      {list.isLoading ? (
        <Loading label="Loading marks…" />
      ) : list.error ? (
        <ErrorNote error={list.error} />
      ) : !list.data?.marks.length ? (
        <Empty>Nothing is marked. Mark a tipping point to measure lead times against it, or a maintenance break to start the analysis after it.</Empty>
      ) : (
        <ul className="space-y-1">
          {list.data.marks.map((t) => (
            <li key={t.id} className="flex flex-wrap items-baseline gap-2">
              <span className="num">{formatLocal(t.at, timeZone)}</span>
              <span data-testid="mark-kind">{t.kind === 'maintenance' ? '⚙ maintenance break' : '◆ tipping point'}</span>
              <span className="text-ink-soft">{t.note}</span>
              {canEdit ? (
                <Button
                  variant="danger"
                  size="sm"
                  className="ml-auto"
                  onClick={() => remove.mutate(t.id)}
                  disabled={remove.isPending}
                  aria-label={`Remove the mark of ${formatLocal(t.at, timeZone)}`}
                >
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
          <Field label="Kind">
            <select className={CONTROL} value={kind} onChange={(e) => setKind(e.target.value as MarkKind)}>
              {MARK_KINDS.map((k) => (
                <option key={k} value={k}>
                  {MARK_KIND_LABELS[k]}
                </option>
              ))}
            </select>
          </Field>
          <Field label="Note" className="flex-1">
            <input
              type="text"
              maxLength={2000}
              className={CONTROL}
              value={note}
              onChange={(e) => setNote(e.target.value)}
              placeholder="What happened, and how it is known"
            />
          </Field>
          <Button type="submit" disabled={add.isPending || !instant?.ok}>
            Mark
          </Button>
        </form>
      ) : null}
      {add.error ? <ErrorNote error={add.error}>The mark could not be saved.</ErrorNote> : null}
      {remove.error ? <ErrorNote error={remove.error}>The mark could not be removed.</ErrorNote> : null}
    </div>
  );
}
