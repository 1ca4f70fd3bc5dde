import crypto from 'node:crypto';
import type { Transaction } from 'sequelize';
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
    id: token.id,
    seriesId: token.seriesId,
    label: token.label,
    createdBy: token.createdBy,
    createdAt: token.createdAt,
    lastUsedAt: token.lastUsedAt,
    revokedAt: token.revokedAt,
    revoked: token.revokedAt !== null,
  };
}

/**
 * Issues a push token for one series: 32 random bytes, base64url, with a `bwi_` prefix so a leaked one is
 * recognisable. `actor` null: issued by Brinkwatch itself (the demo's push station). Inside `transaction` when one
 * is given, so a caller can keep what it needs of the token in the same commit.
 */
export async function issueIngestToken(
  seriesId: number,
  label: string,
  actor: Pick<Actor, 'id'> | null,
  transaction?: Transaction,
): Promise<{ id: number; token: string }> {
  const token = `bwi_${crypto.randomBytes(32).toString('base64url')}`;
  const issue = async (within: Transaction) => {
    const row = await IngestToken.create(
      { seriesId, tokenHash: hashIngestToken(token), label, createdBy: actor?.id ?? null, lastUsedAt: null, revokedAt: null },
      { transaction: within },
    );
    await recordAudit(
      { actorId: actor?.id ?? null, action: 'ingest-token.issue', entity: 'ingest-token', entityId: row.id, details: { seriesId, label } },
      within,
    );
    return { id: row.id, token };
  };
  return transaction ? issue(transaction) : writeTransaction(issue);
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
      await recordAudit(
        { actorId: actor.id, action: 'ingest-token.revoke', entity: 'ingest-token', entityId: id, details: { seriesId: token.seriesId } },
        transaction,
      );
    }
    return token;
  });
}
