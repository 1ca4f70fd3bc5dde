/** Roles in rising order: each includes every permission of the ones before it. */
export const ROLES = ['viewer', 'analyst', 'lead', 'admin'] as const;
export type Role = (typeof ROLES)[number];

export function roleRank(role: Role): number {
  return ROLES.indexOf(role);
}

export function roleAtLeast(role: Role, minimum: Role): boolean {
  return roleRank(role) >= roleRank(minimum);
}
