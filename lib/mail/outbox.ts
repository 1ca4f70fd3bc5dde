import { QueryTypes, type Transaction } from 'sequelize';
import { MailMessage, db, writeTransaction } from '@/models';
import { NotFoundError, ConflictError } from '@/lib/http/errors';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { sqlDate } from '@/lib/db/sql-date';

export interface OutgoingMail {
  kind: string;
  /** Names the event and recipient (e.g. `alert-new:12:user-3`); the same key is never enqueued twice. */
  dedupeKey: string;
  to: string;
  subject: string;
  text: string;
  html: string;
}

/**
 * Writes a message to the outbox, inside the caller's transaction so the message exists exactly when the event
 * that caused it does. Idempotent: a second call with the same dedupe key is a no-op. Returns whether it was new.
 */
export async function enqueueMail(mail: OutgoingMail, transaction?: Transaction): Promise<boolean> {
  const sequelize = await db();
  // ON CONFLICT DO NOTHING rather than catching a unique error: inside a transaction a failed insert would abort it.
  const [, changes] = await sequelize.query(
    `INSERT INTO mail_outbox (kind, dedupe_key, to_address, subject, text_body, html_body, status, attempts, next_attempt_at, created_at, updated_at)
     VALUES (:kind, :dedupeKey, :to, :subject, :text, :html, 'pending', 0, :now, :now, :now)
     ON CONFLICT(dedupe_key) DO NOTHING`,
    { replacements: { ...mail, now: sqlDate(Date.now()) }, transaction, type: QueryTypes.INSERT },
  );
  // For an INSERT the SQLite dialect answers [lastID, changes], the PostgreSQL one [rows, rowCount].
  return Number(changes) > 0;
}

/** The public shape of an outbox row for the admin page (bodies are left out of the list). */
export function presentOutboxMessage(message: MailMessage) {
  return {
    id: message.id,
    kind: message.kind,
    to: message.toAddress,
    subject: message.subject,
    status: message.status,
    attempts: message.attempts,
    nextAttemptAt: message.nextAttemptAt,
    lastError: message.lastError,
    sentAt: message.sentAt,
    createdAt: message.createdAt,
  };
}

export async function fetchOutbox(filter: { status?: string; page: number; pageSize: number }) {
  await db();
  const where = filter.status ? { status: filter.status } : {};
  const { rows, count } = await MailMessage.findAndCountAll({
    where,
    order: [['id', 'DESC']],
    limit: filter.pageSize,
    offset: (filter.page - 1) * filter.pageSize,
  });
  const sequelize = await db();
  const totals = await sequelize.query<{ status: string; count: number }>('SELECT status, COUNT(*) AS count FROM mail_outbox GROUP BY status', {
    type: QueryTypes.SELECT,
  });
  return { items: rows.map(presentOutboxMessage), total: count, counts: Object.fromEntries(totals.map((t) => [t.status, Number(t.count)])) };
}

/** Puts a failed (or waiting) message back at the head of the queue, with a fresh attempt budget. */
export async function retryMail(id: number, actor: Pick<Actor, 'id'>): Promise<MailMessage> {
  return writeTransaction(async (transaction) => {
    const message = await MailMessage.findByPk(id, { transaction });
    if (!message) throw new NotFoundError('Message');
    if (message.status === 'sent') throw new ConflictError('This message has already been delivered.');
    if (message.status === 'sending') throw new ConflictError('This message is being sent right now.');
    await message.update({ status: 'pending', attempts: 0, nextAttemptAt: new Date(), claimedBy: null }, { transaction });
    await recordAudit(
      { actorId: actor.id, action: 'mail.retry', entity: 'mail_outbox', entityId: id, details: { to: message.toAddress, kind: message.kind } },
      transaction,
    );
    return message;
  });
}
