'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { api } from '@/components/api';
import { LocalTime } from '@/components/LocalTime';
import { SeriesPicker } from '@/components/SeriesPicker';
import { Empty, ErrorNote, Loading } from '@/components/States';
import type { SeriesChoice } from '@/lib/series/registry';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';

interface TokenRow {
  id: number;
  label: string;
  createdAt: string;
  lastUsedAt: string | null;
  revokedAt: string | null;
}

/** Push-API tokens of one series: issue (the secret is shown once), see last use, revoke. */
export function TokensAdmin({ hasSeries }: { hasSeries: boolean }) {
  const client = useQueryClient();
  const [series, setSeries] = useState<SeriesChoice | null>(null);
  const slug = series?.slug ?? '';
  const [label, setLabel] = useState('');
  const [secret, setSecret] = useState<string | null>(null);
  const key = ['tokens', slug];
  const tokens = useQuery({
    queryKey: key,
    queryFn: () => api<{ items: TokenRow[] } | TokenRow[]>(`/api/series/${slug}/tokens`).then((r) => (Array.isArray(r) ? r : r.items)),
    enabled: Boolean(slug),
  });
  const issue = useMutation({
    mutationFn: () => api<{ token: string }>(`/api/series/${slug}/tokens`, { method: 'POST', body: { label } }),
    onSuccess: (data) => {
      setSecret(data.token);
      setLabel('');
      void client.invalidateQueries({ queryKey: key });
    },
  });
  const revoke = useMutation({
    mutationFn: (id: number) => api(`/api/tokens/${id}`, { method: 'DELETE' }),
    onSuccess: () => client.invalidateQueries({ queryKey: key }),
  });
  if (!hasSeries) return <Empty>Register a series first.</Empty>;
  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-end gap-3">
        <SeriesPicker
          label="Series"
          required
          value={series}
          onChange={(choice) => {
            setSeries(choice);
            setSecret(null);
          }}
        />
        <form
          className="flex flex-wrap items-end gap-2"
          onSubmit={(e) => {
            e.preventDefault();
            issue.mutate();
          }}
        >
          <Field label="Label (who uses it)" tone="filter">
            <input value={label} onChange={(e) => setLabel(e.target.value)} className={CONTROL} placeholder="e.g. buoy logger 3" />
          </Field>
          <Button type="submit" variant="primary" disabled={issue.isPending || !series}>
            Issue a token
          </Button>
        </form>
      </div>
      {secret ? (
        <div role="status" className="rounded border border-watch bg-watch-light p-3 text-sm">
          <p className="font-medium">Copy this token now; it is not shown again.</p>
          <code className="mt-1 block break-all font-mono" data-testid="new-token">
            {secret}
          </code>
        </div>
      ) : null}
      {issue.isError ? <ErrorNote error={issue.error}>No token issued.</ErrorNote> : null}
      {revoke.isError ? <ErrorNote error={revoke.error}>Not revoked.</ErrorNote> : null}
      {!series ? (
        <p className="text-sm text-ink-soft">Choose a series to see its tokens and issue one.</p>
      ) : tokens.isPending ? (
        <Loading />
      ) : tokens.isError ? (
        <ErrorNote error={tokens.error} />
      ) : tokens.data.length === 0 ? (
        <Empty>No tokens for this series.</Empty>
      ) : (
        <ul className="divide-y divide-rule rounded-lg border border-rule bg-card text-sm">
          {tokens.data.map((t) => (
            <li key={t.id} className="flex flex-wrap items-center gap-3 px-3 py-2">
              <span className="font-medium">{t.label || `token #${t.id}`}</span>
              <span className="text-ink-soft">
                issued <LocalTime t={t.createdAt} timeZone="UTC" withZone />
              </span>
              <span className="text-ink-soft">last used {t.lastUsedAt ? <LocalTime t={t.lastUsedAt} timeZone="UTC" withZone /> : 'never'}</span>
              {t.revokedAt ? (
                <span className="text-ink-faint">○ revoked</span>
              ) : (
                <Button size="sm" onClick={() => revoke.mutate(t.id)} className="ml-auto">
                  Revoke
                </Button>
              )}
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
