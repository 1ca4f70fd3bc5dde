import type { Transaction } from 'sequelize';
import { AuditEntry, db } from '@/models';

/** Appends to the audit log, inside the caller's transaction when it has one so the entry and the change stand or fall together. */
export async function recordAudit(
  entry: { actorId: number | null; action: string; entity: string; entityId?: string | number | null; details?: Record<string, unknown> },
  transaction?: Transaction,
): Promise<void> {
  await db();
  await AuditEntry.create(
    {
      actorId: entry.actorId,
      action: entry.action,
      entity: entry.entity,
      entityId: entry.entityId == null ? null : String(entry.entityId),
      details: entry.details ?? {},
    },
    { transaction },
  );
}
