import { PasswordLinkPage } from '@/components/PasswordLinkPage';

export const metadata = { title: 'Accept invitation' };

export default async function InvitePage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  return (
    <PasswordLinkPage
      heading="Choose a password to join"
      hint="Your account becomes active once the password is set. The link works once."
      endpoint={`/api/invitations/${encodeURIComponent(token)}/accept`}
      submitLabel="Activate my account"
    />
  );
}
