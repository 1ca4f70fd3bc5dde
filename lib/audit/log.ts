import 'server-only';
import { AuditEntry, User, db } from '@/models';
import { auditQuerySchema } from '@/lib/schemas/account';

/** One audit entry as the audit page and its API carry it (`at` an ISO 8601 string). */
export interface AuditItem {
  id: number;
  at: string;
  actor: { id: number; name: string; email: string } | null;
  action: string;
  entity: string;
  entityId: string | null;
  details: Record<string, unknown>;
}

export interface AuditPage {
  items: AuditItem[];
  total: number;
  page: number;
  pageSize: number;
}

/** The audit log, newest first, one page at a time; optional exact filters on action and entity. */
export async function fetchAuditPage(input: unknown): Promise<AuditPage> {
  const query = auditQuerySchema.parse(input);
  await db();
  const where: Record<string, string> = {};
  if (query.action) where.action = query.action;
  if (query.entity) where.entity = query.entity;
  const { rows, count } = await AuditEntry.findAndCountAll({
    where,
    include: [{ model: User, as: 'actor', attributes: ['id', 'name', 'email'] }],
    order: [['id', 'DESC']],
    limit: query.pageSize,
    offset: (query.page - 1) * query.pageSize,
  });
  return {
    items: rows.map((row) => {
      const actor = (row as AuditEntry & { actor?: User | null }).actor;
      return {
        id: row.id,
        at: row.createdAt.toISOString(),
        action: row.action,
        entity: row.entity,
        entityId: row.entityId,
        details: row.details,
        actor: actor ? { id: actor.id, name: actor.name, email: actor.email } : null,
      };
    }),
    total: count,
    page: query.page,
    pageSize: query.pageSize,
  };
}
