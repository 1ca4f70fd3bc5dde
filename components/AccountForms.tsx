'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { signOut } from 'next-auth/react';
import { useRouter } from 'next/navigation';
import { useMemo, useState, type FormEvent } from 'react';
import { api, ApiError } from '@/components/api';
import { Empty, ErrorNote, Loading, Panel } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { CONTROL, CONTROL_BARE, Field } from '@/components/ui/Field';

interface WatchRow {
  seriesId: number;
  slug: string | null;
  name: string | null;
  mode: string;
}

const control = `${CONTROL} w-full`;
const MODES = [
  { value: 'immediate', label: 'Mail each alert at once' },
  { value: 'digest', label: 'Daily summary' },
  { value: 'none', label: 'No mail' },
];

function fieldError(error: unknown, field: string): string | null {
  return error instanceof ApiError ? (error.fields?.[field]?.[0] ?? null) : null;
}

/** Name, password change, and the mail preference for every series (watched or not). */
export function AccountForms({ name, email, role, series }: { name: string; email: string; role: string; series: { slug: string; name: string }[] }) {
  const router = useRouter();
  const client = useQueryClient();
  const [newName, setNewName] = useState(name);
  const [passwords, setPasswords] = useState({ currentPassword: '', newPassword: '' });
  const rename = useMutation({ mutationFn: () => api('/api/account', { method: 'PATCH', body: { name: newName } }), onSuccess: () => router.refresh() });
  const change = useMutation({
    mutationFn: () => api('/api/account', { method: 'POST', body: passwords }),
    // A new password ends every session, this one included: sign in again with it.
    onSuccess: () => signOut({ callbackUrl: '/signin?notice=password-changed' }),
  });
  const watches = useQuery({ queryKey: ['watches'], queryFn: () => api<{ items: WatchRow[] }>('/api/watches').then((r) => r.items) });
  const setWatch = useMutation({
    mutationFn: ({ slug, mode }: { slug: string; mode: string }) => api(`/api/series/${slug}/watch`, { method: 'PUT', body: { mode } }),
    onSuccess: () => client.invalidateQueries({ queryKey: ['watches'] }),
  });

  function submitName(e: FormEvent) {
    e.preventDefault();
    rename.mutate();
  }
  function submitPassword(e: FormEvent) {
    e.preventDefault();
    change.mutate();
  }
  const modes = useMemo(() => new Map((watches.data ?? []).map((w) => [w.slug, w.mode])), [watches.data]);
  const modeOf = (slug: string) => modes.get(slug) ?? 'none';
  // A network of hundreds of series: find one by name, or list only those that send mail now.
  const [find, setFind] = useState('');
  const [onlyMailing, setOnlyMailing] = useState(false);
  const needle = find.trim().toLowerCase();
  const listed = series.filter((s) => (!needle || `${s.name} ${s.slug}`.toLowerCase().includes(needle)) && (!onlyMailing || modeOf(s.slug) !== 'none'));

  return (
    <div className="grid grid-cols-1 gap-4 lg:grid-cols-2">
      <Panel title="You" id="you">
        <p className="mb-3 text-sm text-ink-soft">
          {email} · role <strong className="text-ink">{role}</strong> (set by an admin)
        </p>
        <form onSubmit={submitName} className="space-y-2">
          <Field label="Name">
            <input value={newName} onChange={(e) => setNewName(e.target.value)} required className={control} />
          </Field>
          <Button type="submit" variant="primary" disabled={rename.isPending || newName.trim() === name}>
            Save name
          </Button>
          {rename.isSuccess ? (
            <p role="status" className="text-sm text-calm">
              ✓ Saved
            </p>
          ) : null}
          {rename.isError ? <ErrorNote error={rename.error}>Not saved.</ErrorNote> : null}
        </form>
      </Panel>
      <Panel title="Password" id="password">
        <form onSubmit={submitPassword} className="space-y-2">
          <Field label="Current password" error={fieldError(change.error, 'currentPassword')}>
            <input
              type="password"
              autoComplete="current-password"
              required
              value={passwords.currentPassword}
              onChange={(e) => setPasswords({ ...passwords, currentPassword: e.target.value })}
              className={control}
            />
          </Field>
          <Field label="New password (at least 12 characters)" error={fieldError(change.error, 'newPassword')}>
            <input
              type="password"
              autoComplete="new-password"
              required
              minLength={12}
              value={passwords.newPassword}
              onChange={(e) => setPasswords({ ...passwords, newPassword: e.target.value })}
              className={control}
            />
          </Field>
          <Button type="submit" variant="primary" disabled={change.isPending}>
            Change password
          </Button>
          {change.isSuccess ? (
            <p role="status" className="text-sm text-calm">
              ✓ Password changed
            </p>
          ) : null}
          {change.isError && !(change.error instanceof ApiError && change.error.fields) ? <ErrorNote error={change.error}>Not changed.</ErrorNote> : null}
        </form>
      </Panel>
      <div className="lg:col-span-2">
        <Panel title="Mail about each series" id="mail">
          {series.length > 0 ? (
            <div className="mb-2 flex flex-wrap items-end gap-3 text-sm" role="search">
              <Field label="Find a series" tone="filter">
                <input type="search" value={find} onChange={(e) => setFind(e.target.value)} placeholder="Name or slug" className={`${CONTROL} w-56`} />
              </Field>
              <label className="flex items-center gap-2 pb-1.5">
                <input type="checkbox" checked={onlyMailing} onChange={(e) => setOnlyMailing(e.target.checked)} /> Only series that send me mail
              </label>
              <span className="ml-auto pb-1.5 text-ink-soft" aria-live="polite">
                {listed.length} of {series.length} series
              </span>
            </div>
          ) : null}
          {watches.isPending ? (
            <Loading />
          ) : watches.isError ? (
            <ErrorNote error={watches.error} />
          ) : series.length === 0 ? (
            <Empty>No series yet.</Empty>
          ) : listed.length === 0 ? (
            <Empty>No series match.</Empty>
          ) : (
            <ul className="divide-y divide-rule text-sm">
              {listed.map((s) => (
                <li key={s.slug} className="flex flex-wrap items-center gap-3 py-2">
                  <span className="min-w-48 flex-1">{s.name}</span>
                  <label className="flex items-center gap-2">
                    <span className="sr-only">Mail for {s.name}</span>
                    <select value={modeOf(s.slug)} onChange={(e) => setWatch.mutate({ slug: s.slug, mode: e.target.value })} className={CONTROL_BARE}>
                      {MODES.map((m) => (
                        <option key={m.value} value={m.value}>
                          {m.label}
                        </option>
                      ))}
                    </select>
                  </label>
                </li>
              ))}
            </ul>
          )}
          {setWatch.isError ? <ErrorNote error={setWatch.error}>Not changed.</ErrorNote> : null}
        </Panel>
      </div>
    </div>
  );
}
