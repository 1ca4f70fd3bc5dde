'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState, type FormEvent } from 'react';
import { api } from '@/components/api';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { ROLES } from '@/lib/auth/roles';

export interface UserRow {
  id: number;
  email: string;
  name: string;
  role: string;
  active: boolean;
  invited: boolean;
}

const control = 'rounded border border-rule bg-card px-2 py-1.5 text-sm';

/** Users: invite by e-mail with a role, change roles, deactivate and reactivate. */
export function UsersAdmin({ initial, selfId }: { initial: UserRow[]; selfId: number }) {
  const client = useQueryClient();
  const users = useQuery({ queryKey: ['users'], queryFn: () => api<{ items: UserRow[] }>('/api/users').then((r) => r.items), initialData: initial });
  const refresh = () => client.invalidateQueries({ queryKey: ['users'] });
  const invite = useMutation({ mutationFn: (body: Record<string, string>) => api('/api/users', { method: 'POST', body }), onSuccess: refresh });
  const update = useMutation({ mutationFn: ({ id, ...body }: { id: number; role?: string; active?: boolean }) => api(`/api/users/${id}`, { method: 'PATCH', body }), onSuccess: refresh });
  const [form, setForm] = useState({ email: '', name: '', role: 'viewer' });

  function submit(event: FormEvent) {
    event.preventDefault();
    invite.mutate(form, { onSuccess: () => setForm({ email: '', name: '', role: 'viewer' }) });
  }

  return (
    <div className="space-y-4">
      <form onSubmit={submit} className="flex flex-wrap items-end gap-3 rounded-lg border border-rule bg-card p-3" aria-label="Invite a user">
        <label className="flex flex-col text-xs font-medium text-ink-soft">E-mail
          <input required type="email" value={form.email} onChange={(e) => setForm({ ...form, email: e.target.value })} className={`${control} mt-1 w-60`} />
        </label>
        <label className="flex flex-col text-xs font-medium text-ink-soft">Name
          <input required value={form.name} onChange={(e) => setForm({ ...form, name: e.target.value })} className={`${control} mt-1`} />
        </label>
        <label className="flex flex-col text-xs font-medium text-ink-soft">Role
          <select value={form.role} onChange={(e) => setForm({ ...form, role: e.target.value })} className={`${control} mt-1`}>
            {ROLES.map((r) => <option key={r} value={r}>{r}</option>)}
          </select>
        </label>
        <button type="submit" disabled={invite.isPending} className="rounded bg-tide px-3 py-1.5 text-sm font-medium text-white disabled:opacity-50">Send invitation</button>
        {invite.isSuccess ? <span role="status" className="text-sm text-calm">✓ Invitation sent</span> : null}
      </form>
      {invite.isError ? <ErrorNote error={invite.error}>Not invited.</ErrorNote> : null}
      {update.isError ? <ErrorNote error={update.error}>Not changed.</ErrorNote> : null}
      {users.isPending ? <Loading /> : users.isError ? <ErrorNote error={users.error} /> : users.data.length === 0 ? <Empty>No users.</Empty> : (
        <div className="overflow-x-auto rounded-lg border border-rule bg-card">
          <table className="w-full min-w-[600px] text-sm">
            <caption className="sr-only">Users</caption>
            <thead className="border-b border-rule bg-paper text-left text-ink-soft">
              <tr><th scope="col" className="px-3 py-2">Name</th><th scope="col" className="px-3 py-2">E-mail</th><th scope="col" className="px-3 py-2">Role</th><th scope="col" className="px-3 py-2">Status</th><th scope="col" className="px-3 py-2"><span className="sr-only">Actions</span></th></tr>
            </thead>
            <tbody className="divide-y divide-rule">
              {users.data.map((u) => (
                <tr key={u.id}>
                  <td className="px-3 py-2">{u.name}</td>
                  <td className="px-3 py-2">{u.email}</td>
                  <td className="px-3 py-2">
                    <select aria-label={`Role of ${u.name}`} value={u.role} disabled={u.id === selfId} onChange={(e) => update.mutate({ id: u.id, role: e.target.value })} className={control}>
                      {ROLES.map((r) => <option key={r} value={r}>{r}</option>)}
                    </select>
                  </td>
                  <td className="px-3 py-2">{u.invited ? '✉ invited' : u.active ? '● active' : '○ deactivated'}</td>
                  <td className="px-3 py-2 text-right">
                    {u.id === selfId || u.invited ? null : (
                      <button type="button" onClick={() => update.mutate({ id: u.id, active: !u.active })} className="rounded border border-rule px-2 py-1 text-xs hover:bg-paper">
                        {u.active ? 'Deactivate' : 'Reactivate'}
                      </button>
                    )}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
