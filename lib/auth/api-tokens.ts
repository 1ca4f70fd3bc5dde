import 'server-only';
import crypto from 'node:crypto';
import { ApiToken, User, db, writeTransaction } from '@/models';
import { recordAudit } from '@/lib/audit';
import { cachedRead } from '@/lib/db/read-cache';
import { NotFoundError, UnauthenticatedError, UnprocessableError } from '@/lib/http/errors';
import type { ApiTokenCreate } from '@/lib/schemas/api-token';
import { ROLES, roleAtLeast, type Actor, type Role } from './roles';

/** Personal tokens start with this, push tokens with `bwi_`: a leaked one is recognisable, and each finds its check. */
const PERSONAL_TOKEN_PREFIX = 'bwp_';
const INGEST_TOKEN_PREFIX = 'bwi_';
/** A token's last use is written at most this often, so a busy script does not turn every read into a write. */
const LAST_USE_RESOLUTION_MS = 60_000;

/** Whether an Authorization header carries a personal token (a person, unlike a push token). */
export function isPersonalBearer(authorization: string): boolean {
  return new RegExp(`^Bearer\\s+${PERSONAL_TOKEN_PREFIX}`, 'i').test(authorization.trim());
}

const hashOf = (token: string) => crypto.createHash('sha256').update(token, 'utf8').digest('hex');

/** A token as its owner sees it on the account page (never the secret). */
function presentApiToken(token: ApiToken) {
  return {
    id: token.id,
    name: token.name,
    role: token.role,
    createdAt: token.createdAt.toISOString(),
    lastUsedAt: token.lastUsedAt?.toISOString() ?? null,
    revokedAt: token.revokedAt?.toISOString() ?? null,
  };
}
export type ApiTokenRecord = ReturnType<typeof presentApiToken>;

/** Issues a token for the actor: 32 random bytes, base64url, shown once; only its SHA-256 is kept. Audited. */
export async function issueApiToken(actor: Actor, input: ApiTokenCreate): Promise<{ id: number; token: string; role: Role }> {
  const role = input.role ?? actor.role;
  if (!roleAtLeast(actor.role, role))
    throw new UnprocessableError('A token cannot have a higher role than its owner.', { role: [`Choose ${actor.role} or lower.`] });
  const token = `${PERSONAL_TOKEN_PREFIX}${crypto.randomBytes(32).toString('base64url')}`;
  return writeTransaction(async (transaction) => {
    const row = await ApiToken.create(
      { userId: actor.id, name: input.name, tokenHash: hashOf(token), role, lastUsedAt: null, revokedAt: null },
      { transaction },
    );
    await recordAudit(
      { actorId: actor.id, action: 'api-token.issue', entity: 'api-token', entityId: row.id, details: { name: input.name, role } },
      transaction,
    );
    return { id: row.id, token, role };
  });
}

/** The actor's own tokens, newest first, revoked ones included (greyed out on screen). */
export async function listApiTokens(actor: Pick<Actor, 'id'>): Promise<ApiTokenRecord[]> {
  await db();
  return (await ApiToken.findAll({ where: { userId: actor.id }, order: [['id', 'DESC']] })).map(presentApiToken);
}

/** Revokes one of the actor's own tokens at once (another's is a 404, as if it did not exist). Audited once. */
export async function revokeApiToken(actor: Pick<Actor, 'id'>, id: number): Promise<ApiTokenRecord> {
  return writeTransaction(async (transaction) => {
    const token = await ApiToken.findOne({ where: { id, userId: actor.id }, transaction });
    if (!token) throw new NotFoundError('Token');
    if (!token.revokedAt) {
      await token.update({ revokedAt: new Date() }, { transaction });
      await recordAudit({ actorId: actor.id, action: 'api-token.revoke', entity: 'api-token', entityId: id, details: { name: token.name } }, transaction);
    }
    return presentApiToken(token);
  });
}

const lowerRole = (a: Role, b: Role): Role => (ROLES.indexOf(a) <= ROLES.indexOf(b) ? a : b);

/**
 * The actor an `Authorization: Bearer …` header speaks for: a personal token acts as its owner with the lower of
 * the token's role and the owner's current role; a revoked token, an unknown one or an inactive owner is refused
 * (401) at once — the lookup goes through the read cache, which drops its answer at the next commit anywhere. A
 * push token is refused here too (401): it may only push data to its series.
 */
export async function bearerActor(authorization: string): Promise<Actor> {
  const match = /^Bearer\s+(\S+)$/i.exec(authorization.trim());
  if (!match) throw new UnauthenticatedError('Send a token as "Authorization: Bearer <token>".');
  const secret = match[1];
  // A push token is no person: anywhere but its push route it is as good as no credential at all.
  if (secret.startsWith(INGEST_TOKEN_PREFIX)) throw new UnauthenticatedError('A push token may only send data to its series; read with a personal token.');
  const tokenHash = hashOf(secret);
  const found = await cachedRead(`api-token:${tokenHash}`, async () => {
    await db();
    const token = await ApiToken.findOne({ where: { tokenHash }, attributes: ['id', 'userId', 'role', 'revokedAt', 'lastUsedAt'] });
    if (!token || token.revokedAt) return null;
    const owner = await User.findByPk(token.userId, { attributes: ['id', 'email', 'name', 'role', 'active'] });
    if (!owner || !owner.active) return null;
    return {
      tokenId: token.id,
      lastUsedAt: token.lastUsedAt?.getTime() ?? null,
      actor: { id: owner.id, email: owner.email, name: owner.name, role: lowerRole(token.role, owner.role) },
    };
  });
  if (!found) throw new UnauthenticatedError('The token is not valid or has been revoked.');
  if (found.lastUsedAt === null || Date.now() - found.lastUsedAt > LAST_USE_RESOLUTION_MS) {
    await ApiToken.update({ lastUsedAt: new Date() }, { where: { id: found.tokenId } });
  }
  return found.actor;
}
