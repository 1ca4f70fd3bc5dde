import 'server-only';
import { IngestToken, Series, db } from '@/models';
import { ForbiddenError, NotFoundError, UnauthenticatedError } from '@/lib/http/errors';
import { requireRole } from '@/lib/auth/guard';
import { isPersonalBearer } from '@/lib/auth/api-tokens';
import type { Actor } from '@/lib/auth/roles';
import { hashIngestToken } from './tokens';

/** Who is writing to a series, and the series itself. */
export interface IngestWriter {
  /** the signed-in lead or admin; null when a token writes */
  actor: Actor | null;
  tokenId: number | null;
  series: Series;
}

/**
 * Who may add data to the series `slug`: a bearer ingest token of that series (401 when missing, unknown or
 * revoked; 403 when it belongs to another series; its last use is recorded), or else a signed-in lead or admin, or
 * the personal token of one (404 when the series does not exist).
 */
export async function requireIngestWriter(request: Request, slug: string): Promise<IngestWriter> {
  const authorization = request.headers.get('authorization');
  // A personal token is a person: it writes as a lead would, through requireRole below.
  if (authorization !== null && !isPersonalBearer(authorization)) {
    const match = /^Bearer\s+(\S+)$/i.exec(authorization.trim());
    if (!match) throw new UnauthenticatedError('Send the ingest token as "Authorization: Bearer <token>".');
    await db();
    const token = await IngestToken.findOne({ where: { tokenHash: hashIngestToken(match[1]) } });
    if (!token || token.revokedAt) throw new UnauthenticatedError('The ingest token is not valid or has been revoked.');
    const series = await Series.findByPk(token.seriesId);
    if (!series || series.slug !== slug) throw new ForbiddenError('This ingest token belongs to another series.');
    await token.update({ lastUsedAt: new Date() });
    return { actor: null, tokenId: token.id, series };
  }
  const actor = await requireRole('lead');
  const series = await Series.findOne({ where: { slug } });
  if (!series) throw new NotFoundError('Series');
  return { actor, tokenId: null, series };
}
