// Client-safe: no imports, so components, models and server code all read roles from here without pulling in
// next-auth or the database.

/** Roles in rising order: each includes every permission of the ones before it. */
export const ROLES = ['viewer', 'analyst', 'lead', 'admin'] as const;
export type Role = (typeof ROLES)[number];

/** Who is asking: the signed-in user as `requireRole` (lib/auth/guard.ts) returns them. */
export interface Actor {
  id: number;
  email: string;
  name: string;
  role: Role;
}

function roleRank(role: Role): number {
  return ROLES.indexOf(role);
}

export function roleAtLeast(role: Role, minimum: Role): boolean {
  return roleRank(role) >= roleRank(minimum);
}
