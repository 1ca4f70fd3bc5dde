import type { Role } from '@/lib/auth/roles';

/** What a signed-in person sees on a screen their role does not reach (the API refuses them as well). */
export function RoleNeeded({ role, what }: { role: Role; what: string }) {
  return (
    <p role="alert" className="rounded border border-rule bg-card px-4 py-6 text-sm text-ink-soft" data-testid="role-needed">
      {what} needs the {role} role or higher. Ask an administrator if you should have it.
    </p>
  );
}
