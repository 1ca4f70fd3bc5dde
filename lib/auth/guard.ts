import { getServerSession } from 'next-auth';
import { cache } from 'react';
import { IngestToken, Series, User, db, roleAtLeast, type Role } from '@/models';
import { ForbiddenError, NotFoundError, UnauthenticatedError } from '@/lib/http/errors';
import { cachedRead } from '@/lib/db/read-cache';
import { hashIngestToken } from '@/lib/intake/tokens';
import { authOptions } from './options';

export interface Actor {
  id: number;
  email: string;
  name: string;
  role: Role;
}

/**
 * Who is asking, with their current role, or why they may not ask at all. The session only says who; role, active
 * flag and session version come from the database (through the read cache, which drops an answer at the next
 * commit), so a deactivation, a role change or a password change takes effect at once. Memoised per server render
 * with React's `cache`, so a page and its layout decode the session and read the user once; route handlers and
 * server actions run outside a render and get a fresh lookup on every call.
 */
const sessionActor = cache(async (): Promise<Actor | UnauthenticatedError> => {
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

/**
 * Who may add data to the series `slug`: a bearer ingest token of that series (401 when missing, unknown or
 * revoked; 403 when it belongs to another series; its last use is recorded), or else a signed-in lead or admin.
 */
export async function requireIngestWriter(request: Request, slug: string): Promise<{ actor: Actor | null; tokenId: number | null; seriesId: number }> {
  const authorization = request.headers.get('authorization');
  if (authorization !== null) {
    const match = /^Bearer\s+(\S+)$/i.exec(authorization.trim());
    if (!match) throw new UnauthenticatedError('Send the ingest token as "Authorization: Bearer <token>".');
    await db();
    const token = await IngestToken.findOne({ where: { tokenHash: hashIngestToken(match[1]) } });
    if (!token || token.revokedAt) throw new UnauthenticatedError('The ingest token is not valid or has been revoked.');
    const series = await Series.findByPk(token.seriesId);
    if (!series || series.slug !== slug) throw new ForbiddenError('This ingest token belongs to another series.');
    await token.update({ lastUsedAt: new Date() });
    return { actor: null, tokenId: token.id, seriesId: series.id };
  }
  const actor = await requireRole('lead');
  const series = await Series.findOne({ where: { slug } });
  if (!series) throw new NotFoundError('Series');
  return { actor, tokenId: null, seriesId: series.id };
}
