'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useState, type FormEvent } from 'react';
import { api } from '@/components/api';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { ROLES } from '@/lib/auth/roles';
import { Button } from '@/components/ui/Button';
import { CELL, DataTable } from '@/components/ui/DataTable';
import { CONTROL, CONTROL_BARE, Field } from '@/components/ui/Field';

export interface UserRow {
  id: number;
  email: string;
  name: string;
  role: string;
  active: boolean;
  invited: boolean;
}

/** Users: invite by e-mail with a role, change roles, deactivate and reactivate. */
export function UsersAdmin({ initial, selfId }: { initial: UserRow[]; selfId: number }) {
  const client = useQueryClient();
  const users = useQuery({ queryKey: ['users'], queryFn: () => api<{ items: UserRow[] }>('/api/users').then((r) => r.items), initialData: initial });
  const refresh = () => client.invalidateQueries({ queryKey: ['users'] });
  const invite = useMutation({ mutationFn: (body: Record<string, string>) => api('/api/users', { method: 'POST', body }), onSuccess: refresh });
  const update = useMutation({
    mutationFn: ({ id, ...body }: { id: number; role?: string; active?: boolean }) => api(`/api/users/${id}`, { method: 'PATCH', body }),
    onSuccess: refresh,
  });
  const [form, setForm] = useState({ email: '', name: '', role: 'viewer' });

  function submit(event: FormEvent) {
    event.preventDefault();
    invite.mutate(form, { onSuccess: () => setForm({ email: '', name: '', role: 'viewer' }) });
  }

  return (
    <div className="space-y-4">
      <form onSubmit={submit} className="flex flex-wrap items-end gap-3 rounded-lg border border-rule bg-card p-3" aria-label="Invite a user">
        <Field label="E-mail" tone="filter">
          <input required type="email" value={form.email} onChange={(e) => setForm({ ...form, email: e.target.value })} className={`${CONTROL} w-60`} />
        </Field>
        <Field label="Name" tone="filter">
          <input required value={form.name} onChange={(e) => setForm({ ...form, name: e.target.value })} className={CONTROL} />
        </Field>
        <Field label="Role" tone="filter">
          <select value={form.role} onChange={(e) => setForm({ ...form, role: e.target.value })} className={CONTROL}>
            {ROLES.map((r) => (
              <option key={r} value={r}>
                {r}
              </option>
            ))}
          </select>
        </Field>
        <Button type="submit" variant="primary" disabled={invite.isPending}>
          Send invitation
        </Button>
        {invite.isSuccess ? (
          <span role="status" className="text-sm text-calm">
            ✓ Invitation sent
          </span>
        ) : null}
      </form>
      {invite.isError ? <ErrorNote error={invite.error}>Not invited.</ErrorNote> : null}
      {update.isError ? <ErrorNote error={update.error}>Not changed.</ErrorNote> : null}
      {users.isPending ? (
        <Loading />
      ) : users.isError ? (
        <ErrorNote error={users.error} />
      ) : users.data.length === 0 ? (
        <Empty>No users.</Empty>
      ) : (
        <DataTable caption="Users" className="min-w-[600px]" columns={['Name', 'E-mail', 'Role', 'Status', { label: 'Actions', srOnly: true }]}>
          {users.data.map((u) => (
            <tr key={u.id}>
              <td className={CELL}>{u.name}</td>
              <td className={CELL}>{u.email}</td>
              <td className={CELL}>
                <select
                  aria-label={`Role of ${u.name}`}
                  value={u.role}
                  disabled={u.id === selfId}
                  onChange={(e) => update.mutate({ id: u.id, role: e.target.value })}
                  className={CONTROL_BARE}
                >
                  {ROLES.map((r) => (
                    <option key={r} value={r}>
                      {r}
                    </option>
                  ))}
                </select>
              </td>
              <td className={CELL}>{u.invited ? '✉ invited' : u.active ? '● active' : '○ deactivated'}</td>
              <td className={`${CELL} text-right`}>
                {u.id === selfId || u.invited ? null : (
                  <Button size="sm" onClick={() => update.mutate({ id: u.id, active: !u.active })}>
                    {u.active ? 'Deactivate' : 'Reactivate'}
                  </Button>
                )}
              </td>
            </tr>
          ))}
        </DataTable>
      )}
    </div>
  );
}
