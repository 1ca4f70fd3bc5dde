import { PasswordLinkPage } from '@/components/PasswordLinkPage';

export const metadata = { title: 'Reset password' };

export default async function ResetPage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  return (
    <PasswordLinkPage
      heading="Choose a new password"
      hint="The link works once and for one hour."
      endpoint={`/api/password-resets/${encodeURIComponent(token)}`}
      submitLabel="Set the new password"
    />
  );
}
