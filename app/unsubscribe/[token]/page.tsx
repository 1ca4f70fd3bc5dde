import { UnsubscribeButton } from '@/components/reports/UnsubscribeButton';
import { describeUnsubscribe } from '@/lib/reports/schedules';

export const metadata = { title: 'Stop scheduled reports' };

/** Public: the signed token in the address is the credential, so recipients without an account can leave a list. */
export default async function UnsubscribePage({ params }: { params: Promise<{ token: string }> }) {
  const token = decodeURIComponent((await params).token);
  const found = await describeUnsubscribe(token);
  return (
    <main className="mx-auto max-w-lg space-y-4 px-4 py-16">
      <p className="font-mono text-sm font-semibold uppercase tracking-widest text-tide">Brinkwatch</p>
      <h1 className="text-xl font-semibold">Stop scheduled reports</h1>
      {!found ? (
        <p>This link is not valid. Copy the whole link from the message, or ask the team that sends the reports.</p>
      ) : !found.subscribed ? (
        <p data-testid="unsubscribed">
          {found.address} no longer receives {found.scheduleName ? `the “${found.scheduleName}” report` : 'this report'}.
        </p>
      ) : (
        <>
          <p>
            Stop sending the “{found.scheduleName}” report to <strong>{found.address}</strong>?
          </p>
          <UnsubscribeButton token={token} />
        </>
      )}
    </main>
  );
}
