import { QueryTypes, type Transaction } from 'sequelize';
import { db } from '@/models';
import { sqlDate } from '@/lib/db/sql-date';
import { jsonElements } from '@/lib/db/dialect';
import type { WebhookEvent } from './events';
import type { WebhookPayload } from './payloads';

/**
 * Queues `payload` for every active endpoint subscribed to `event`, inside the caller's transaction, so a delivery
 * exists exactly when the change that caused it does (as enqueueMail does for mail). Idempotent per endpoint: the
 * payload's id is the idempotency key, and a second enqueue of the same id is a no-op. A paused endpoint gets no
 * new events; what was queued for it before waits until it is resumed. Returns how many deliveries were queued.
 * Cost: one indexed read of the endpoints and one INSERT per subscribed endpoint.
 */
export async function enqueueWebhookEvent(event: WebhookEvent, payload: WebhookPayload, transaction: Transaction): Promise<number> {
  if (payload.event !== event) throw new Error(`webhook payload of ${payload.event} enqueued as ${event}`);
  const sequelize = await db();
  const endpoints = await sequelize.query<{ id: number }>(
    `SELECT id FROM webhook_endpoints WHERE active AND EXISTS (SELECT 1 FROM ${jsonElements(sequelize, 'webhook_endpoints.events', 'e')} WHERE e.value = :event)`,
    { replacements: { event }, transaction, type: QueryTypes.SELECT },
  );
  const body = JSON.stringify(payload);
  const now = sqlDate(Date.now());
  let queued = 0;
  for (const endpoint of endpoints) {
    // INSERT … ON CONFLICT rather than catching a unique error: inside a transaction a failed insert would abort it.
    const [, changes] = await sequelize.query(
      `INSERT INTO webhook_deliveries (endpoint_id, event, idempotency_key, body, status, attempts, next_attempt_at, created_at, updated_at)
       VALUES (:endpointId, :event, :key, :body, 'pending', 0, :now, :now, :now)
       ON CONFLICT(endpoint_id, idempotency_key) DO NOTHING`,
      { replacements: { endpointId: endpoint.id, event, key: payload.id, body, now }, transaction, type: QueryTypes.INSERT },
    );
    queued += Number(changes) > 0 ? 1 : 0;
  }
  return queued;
}
