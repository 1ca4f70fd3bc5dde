import { UsersAdmin } from '@/components/admin/UsersAdmin';
import { requireRole } from '@/lib/auth/guard';
import { listUsers, presentUser } from '@/lib/users/directory';

export const metadata = { title: 'Users' };

export default async function AdminUsersPage() {
  const actor = await requireRole('admin');
  const users = (await listUsers()).map(presentUser);
  return (
    <section className="space-y-3">
      <h1 className="text-xl font-semibold">Users</h1>
      <p className="text-sm text-ink-soft">Invited people get a link by e-mail to set their password; until then the account stays inactive.</p>
      <UsersAdmin initial={users} selfId={actor.id} />
    </section>
  );
}
