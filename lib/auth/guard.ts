import 'server-only';
import { getServerSession } from 'next-auth';
import { headers } from 'next/headers';
import { cache } from 'react';
import { User, db } from '@/models';
import { ForbiddenError, UnauthenticatedError } from '@/lib/http/errors';
import { cachedRead } from '@/lib/db/read-cache';
import { authOptions } from './options';
import { bearerActor } from './api-tokens';
import { roleAtLeast, type Actor, type Role } from './roles';

/**
 * Who is asking, with their current role, or why they may not ask at all: the bearer of a personal API token, or
 * the signed-in user. The session only says who; role, active
 * flag and session version come from the database (through the read cache, which drops an answer at the next
 * commit), so a deactivation, a role change or a password change takes effect at once. Memoised per server render
 * with React's `cache`, so a page and its layout decode the session and read the user once; route handlers and
 * server actions run outside a render and get a fresh lookup on every call.
 */
const sessionActor = cache(async (): Promise<Actor | UnauthenticatedError> => {
  // A script's personal token speaks for its owner instead of a session (lib/auth/api-tokens.ts).
  const authorization = (await headers()).get('authorization');
  if (authorization !== null) return bearerActor(authorization);
  const session = await getServerSession(authOptions);
  const id = session?.user?.id;
  if (!id) return new UnauthenticatedError();
  const user = await cachedRead(`user:${id}`, async () => {
    await db();
    const row = await User.findByPk(id, { attributes: ['id', 'email', 'name', 'role', 'active', 'sessionVersion'] });
    return row && { id: row.id, email: row.email, name: row.name, role: row.role, active: row.active, sessionVersion: row.sessionVersion };
  });
  if (!user || !user.active || session.user.sessionVersion !== user.sessionVersion) {
    return new UnauthenticatedError('Your session has ended. Sign in again.');
  }
  return { id: user.id, email: user.email, name: user.name, role: user.role };
});

/**
 * The one authorisation check, called first in every route handler, server action and protected page.
 * Signed out or inactive: 401. Role too low: 403.
 */
export async function requireRole(minimum: Role): Promise<Actor> {
  const actor = await sessionActor();
  if (actor instanceof UnauthenticatedError) throw actor;
  if (!roleAtLeast(actor.role, minimum)) throw new ForbiddenError(`This needs the ${minimum} role or higher.`);
  return actor;
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
