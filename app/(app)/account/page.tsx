import { AccountForms } from '@/components/AccountForms';
import { ApiTokens } from '@/components/account/ApiTokens';
import { Panel } from '@/components/States';
import { fetchAccount } from '@/lib/users/account';
import { requireRole } from '@/lib/auth/guard';
import { listSeriesChoices } from '@/lib/series/registry';

export const metadata = { title: 'Account' };

export default async function AccountPage() {
  const actor = await requireRole('viewer');
  const [me, series] = await Promise.all([fetchAccount(actor), listSeriesChoices()]);
  return (
    <section className="space-y-4">
      <h1 className="text-xl font-semibold">Account</h1>
      <AccountForms name={me.name} email={me.email} role={me.role} series={series} />
      <Panel title="Personal API tokens" id="tokens">
        <ApiTokens role={actor.role} />
      </Panel>
    </section>
  );
}
