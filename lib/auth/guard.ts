import { getServerSession } from 'next-auth';
import { User, db, roleAtLeast, type Role } from '@/models';
import { ForbiddenError, UnauthenticatedError } from '@/lib/http/errors';
import { authOptions } from './options';

export interface Actor {
  id: number;
  email: string;
  name: string;
  role: Role;
}

/**
 * The one authorisation check, called first in every route handler, server action and protected page.
 * The session only says who is asking; role and active flag are read from the database on each call, so a
 * deactivation or a role change takes effect at once. Signed out or inactive: 401. Role too low: 403.
 */
export async function requireRole(minimum: Role): Promise<Actor> {
  const session = await getServerSession(authOptions);
  const id = session?.user?.id;
  if (!id) throw new UnauthenticatedError();
  await db();
  const user = await User.findByPk(id);
  if (!user || !user.active) throw new UnauthenticatedError('Your session has ended. Sign in again.');
  if (!roleAtLeast(user.role, minimum)) throw new ForbiddenError(`This needs the ${minimum} role or higher.`);
  return { id: user.id, email: user.email, name: user.name, role: user.role };
}

/** The signed-in actor or null, for pages that show different things to different roles. */
export async function currentActor(): Promise<Actor | null> {
  try {
    return await requireRole('viewer');
  } catch (error) {
    if (error instanceof UnauthenticatedError) return null;
    throw error;
  }
}
