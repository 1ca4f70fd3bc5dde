import crypto from 'node:crypto';
import os from 'node:os';
import { QueryTypes } from 'sequelize';
import { db } from '@/models';

/** This process's identity as a lease holder. */
export const PROCESS_HOLDER = `${os.hostname()}:${process.pid}:${crypto.randomBytes(4).toString('hex')}`;

/**
 * Claims `name` for `ttlMs` unless another live holder has it: one atomic upsert, so two schedulers on one
 * database never both win. An expired lease (its holder died) can be taken over. Returns true when held.
 */
export async function acquireLease(name: string, ttlMs: number, holder = PROCESS_HOLDER, now = Date.now()): Promise<boolean> {
  const sequelize = await db();
  // The leading comment keeps Sequelize's SQLite dialect from taking this for a plain INSERT (run(), no rows),
  // so the RETURNING row comes back through all().
  const rows = await sequelize.query<{ holder: string }>(
    `/* claim */ INSERT INTO leases (name, holder, expires_at) VALUES (:name, :holder, :expires)
     ON CONFLICT(name) DO UPDATE SET holder = excluded.holder, expires_at = excluded.expires_at
     WHERE leases.holder = excluded.holder OR leases.expires_at < :now
     RETURNING holder`,
    { replacements: { name, holder, expires: now + ttlMs, now }, type: QueryTypes.SELECT },
  );
  return rows.length === 1 && rows[0].holder === holder;
}

/** Extends a lease this holder still has; false when it was lost (expired and taken). */
export async function renewLease(name: string, ttlMs: number, holder = PROCESS_HOLDER, now = Date.now()): Promise<boolean> {
  const sequelize = await db();
  // As in acquireLease: the comment and RETURNING make the dialect hand back the updated row, if any.
  const rows = await sequelize.query<{ name: string }>(
    '/* renew */ UPDATE leases SET expires_at = :expires WHERE name = :name AND holder = :holder RETURNING name',
    { replacements: { name, holder, expires: now + ttlMs }, type: QueryTypes.SELECT },
  );
  return rows.length === 1;
}

export async function releaseLease(name: string, holder = PROCESS_HOLDER): Promise<void> {
  const sequelize = await db();
  await sequelize.query('DELETE FROM leases WHERE name = :name AND holder = :holder', { replacements: { name, holder } });
}

/** Runs `work` only while holding the lease, renewing it every ttl/3, and releases it afterwards. Null if not won. */
export async function withLease<T>(name: string, ttlMs: number, work: () => Promise<T>): Promise<T | null> {
  if (!(await acquireLease(name, ttlMs))) return null;
  const timer = setInterval(
    () => {
      renewLease(name, ttlMs).catch(() => undefined);
    },
    Math.max(1000, Math.floor(ttlMs / 3)),
  );
  try {
    return await work();
  } finally {
    clearInterval(timer);
    await releaseLease(name).catch(() => undefined);
  }
}
