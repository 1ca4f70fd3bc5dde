import 'server-only';
import crypto from 'node:crypto';
import { IngestToken, db, writeTransaction } from '@/models';
import { NotFoundError } from '@/lib/http/errors';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { contentHashOf } from './content-hash';

/** Only this digest of a push token is stored; the token itself is shown once, when issued. */
export function hashIngestToken(token: string): string {
  return contentHashOf(token);
}

export function presentToken(token: IngestToken) {
  return {
    id: token.id, seriesId: token.seriesId, label: token.label, createdBy: token.createdBy, createdAt: token.createdAt,
    lastUsedAt: token.lastUsedAt, revokedAt: token.revokedAt, revoked: token.revokedAt !== null,
  };
}

/** Issues a push token for one series: 32 random bytes, base64url, with a `bwi_` prefix so a leaked one is recognisable. */
export async function issueIngestToken(seriesId: number, label: string, actor: Pick<Actor, 'id'>): Promise<{ id: number; token: string }> {
  const token = `bwi_${crypto.randomBytes(32).toString('base64url')}`;
  return writeTransaction(async (transaction) => {
    const row = await IngestToken.create({ seriesId, tokenHash: hashIngestToken(token), label, createdBy: actor.id, lastUsedAt: null, revokedAt: null }, { transaction });
    await recordAudit({ actorId: actor.id, action: 'ingest-token.issue', entity: 'ingest-token', entityId: row.id, details: { seriesId, label } }, transaction);
    return { id: row.id, token };
  });
}

export async function listIngestTokens(seriesId: number): Promise<IngestToken[]> {
  await db();
  return IngestToken.findAll({ where: { seriesId }, order: [['id', 'DESC']] });
}

/** Revokes a token at once; later requests with it answer 401. Revoking twice keeps the first time. */
export async function revokeIngestToken(id: number, actor: Pick<Actor, 'id'>): Promise<IngestToken> {
  await db();
  return writeTransaction(async (transaction) => {
    const token = await IngestToken.findByPk(id, { transaction });
    if (!token) throw new NotFoundError('Ingest token');
    if (!token.revokedAt) {
      await token.update({ revokedAt: new Date() }, { transaction });
      await recordAudit({ actorId: actor.id, action: 'ingest-token.revoke', entity: 'ingest-token', entityId: id, details: { seriesId: token.seriesId } }, transaction);
    }
    return token;
  });
}
