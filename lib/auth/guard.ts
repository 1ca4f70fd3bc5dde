import { getServerSession } from 'next-auth';
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
 * The one authorisation check, called first in every route handler, server action and protected page.
 * The session only says who is asking; role, active flag and session version come from the database on each call
 * (through the read cache, which drops an answer at the next commit), so a deactivation, a role change or a
 * password change takes effect at once. Signed out or inactive: 401. Role too low: 403.
 */
export async function requireRole(minimum: Role): Promise<Actor> {
  const session = await getServerSession(authOptions);
  const id = session?.user?.id;
  if (!id) throw new UnauthenticatedError();
  const user = await cachedRead(`user:${id}`, async () => {
    await db();
    const row = await User.findByPk(id, { attributes: ['id', 'email', 'name', 'role', 'active', 'sessionVersion'] });
    return row && { id: row.id, email: row.email, name: row.name, role: row.role, active: row.active, sessionVersion: row.sessionVersion };
  });
  if (!user || !user.active || session.user.sessionVersion !== user.sessionVersion) {
    throw new UnauthenticatedError('Your session has ended. Sign in again.');
  }
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
