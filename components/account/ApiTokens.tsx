'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState } from 'react';
import { api, ApiError } from '@/components/api';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CELL, DataTable } from '@/components/ui/DataTable';
import { CONTROL, Field } from '@/components/ui/Field';
import { ROLES, roleAtLeast, type Role } from '@/lib/auth/roles';
import { formatUtc } from '@/lib/display/format';
import type { ApiTokenRecord } from '@/lib/auth/api-tokens';

/**
 * The caller's personal API tokens: made for a script (named, with the caller's role or a lower one), shown once,
 * listed with their last use, revoked at once.
 */
export function ApiTokens({ role }: { role: Role }) {
  const client = useQueryClient();
  const key = ['account-tokens'];
  const list = useQuery({ queryKey: key, queryFn: () => api<{ tokens: ApiTokenRecord[] }>('/api/account/tokens') });
  const [name, setName] = useState('');
  const [tokenRole, setTokenRole] = useState<Role>('viewer');
  const [issued, setIssued] = useState<{ name: string; token: string } | null>(null);
  const refresh = () => void client.invalidateQueries({ queryKey: key });
  const issue = useMutation({
    mutationFn: () => api<{ id: number; token: string }>('/api/account/tokens', { method: 'POST', body: { name, role: tokenRole } }),
    onSuccess: (made) => {
      setIssued({ name, token: made.token });
      setName('');
      refresh();
    },
  });
  const revoke = useMutation({ mutationFn: (id: number) => api(`/api/account/tokens/${id}`, { method: 'DELETE' }), onSuccess: refresh });
  const fieldError = (field: string) => (issue.error instanceof ApiError ? (issue.error.fields?.[field]?.[0] ?? null) : null);

  return (
    <div className="space-y-3 text-sm" data-testid="api-tokens">
      <p className="text-ink-soft">
        A personal token lets a script read through the API as you (<code>Authorization: Bearer &lt;token&gt;</code>), with your role or a lower one. Treat it
        as a password: it is shown once, and revoking it stops it at once.
      </p>
      {issued ? (
        <div className="rounded border border-calm bg-calm-light p-2" role="status">
          <p className="font-medium">Token &ldquo;{issued.name}&rdquo; — copy it now, it will not be shown again:</p>
          <code className="block break-all font-mono text-xs" data-testid="issued-token">
            {issued.token}
          </code>
          <Button size="sm" variant="secondary" className="mt-1" onClick={() => setIssued(null)}>
            Done
          </Button>
        </div>
      ) : null}
      {list.isLoading ? (
        <Loading label="Loading tokens…" />
      ) : list.error ? (
        <ErrorNote error={list.error} />
      ) : !list.data?.tokens.length ? (
        <Empty>No tokens yet.</Empty>
      ) : (
        <DataTable caption="Your personal API tokens" frame="plain" columns={['Name', 'Role', 'Made', 'Last used', { label: 'Revoke', srOnly: true }]}>
          {list.data.tokens.map((t) => (
            <tr key={t.id} className={t.revokedAt ? 'text-ink-faint' : undefined}>
              <td className={CELL}>{t.name}</td>
              <td className={CELL}>{t.role}</td>
              <td className={`${CELL} num`}>{formatUtc(Date.parse(t.createdAt))}</td>
              <td className={`${CELL} num`}>{t.lastUsedAt ? formatUtc(Date.parse(t.lastUsedAt)) : 'never'}</td>
              <td className={CELL}>
                {t.revokedAt ? (
                  `revoked ${formatUtc(Date.parse(t.revokedAt))}`
                ) : (
                  <Button size="sm" variant="danger" onClick={() => revoke.mutate(t.id)} disabled={revoke.isPending} aria-label={`Revoke the token ${t.name}`}>
                    Revoke
                  </Button>
                )}
              </td>
            </tr>
          ))}
        </DataTable>
      )}
      <form
        className="flex flex-wrap items-end gap-2"
        onSubmit={(e) => {
          e.preventDefault();
          issue.mutate();
        }}
      >
        <Field label="Name" error={fieldError('name')} className="flex-1">
          <input
            type="text"
            required
            maxLength={100}
            className={CONTROL}
            value={name}
            onChange={(e) => setName(e.target.value)}
            placeholder="e.g. weekly R report"
          />
        </Field>
        <Field label="Acts as" error={fieldError('role')}>
          <select className={CONTROL} value={tokenRole} onChange={(e) => setTokenRole(e.target.value as Role)}>
            {ROLES.filter((r) => roleAtLeast(role, r)).map((r) => (
              <option key={r} value={r}>
                {r}
              </option>
            ))}
          </select>
        </Field>
        <Button type="submit" disabled={issue.isPending || !name.trim()}>
          Make a token
        </Button>
      </form>
      {issue.error && !fieldError('name') && !fieldError('role') ? <ErrorNote error={issue.error}>The token could not be made.</ErrorNote> : null}
      {revoke.error ? <ErrorNote error={revoke.error}>The token could not be revoked.</ErrorNote> : null}
    </div>
  );
}
