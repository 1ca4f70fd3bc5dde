import 'server-only';
import crypto from 'node:crypto';
import { QueryTypes } from 'sequelize';
import { WebhookAttempt, WebhookDelivery, WebhookEndpoint, db, writeTransaction } from '@/models';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { ConflictError, NotFoundError } from '@/lib/http/errors';
import type { WebhookCreate, WebhookDeliveryStatus, WebhookUpdate } from '@/lib/schemas/webhook';
import type { WebhookEvent } from './events';

/** Secrets start with this (personal tokens `bwp_`, push tokens `bwi_`): a leaked one is recognisable. */
const SECRET_PREFIX = 'bws_';

/** An endpoint as the admin screen and GET /api/webhooks show it: never its secret. ISO 8601 times. */
export interface WebhookEndpointRecord {
  id: number;
  url: string;
  events: WebhookEvent[];
  description: string;
  active: boolean;
  createdAt: string;
  /** deliveries by status */
  counts: Partial<Record<WebhookDeliveryStatus, number>>;
  lastDeliveredAt: string | null;
}

export interface WebhookAttemptRecord {
  attemptedAt: string;
  durationMs: number;
  statusCode: number | null;
  error: string | null;
}

export interface WebhookDeliveryRecord {
  id: number;
  event: string;
  idempotencyKey: string;
  status: WebhookDeliveryStatus;
  attempts: number;
  nextAttemptAt: string;
  lastStatus: number | null;
  lastError: string | null;
  deliveredAt: string | null;
  createdAt: string;
  /** the JSON as sent */
  body: string;
  /** every try, oldest first */
  attemptLog: WebhookAttemptRecord[];
}

const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);

async function deliveryStats(endpointIds: number[]): Promise<Map<number, { counts: WebhookEndpointRecord['counts']; lastDeliveredAt: string | null }>> {
  const stats = new Map<number, { counts: WebhookEndpointRecord['counts']; lastDeliveredAt: string | null }>();
  if (!endpointIds.length) return stats;
  const sequelize = await db();
  const rows = await sequelize.query<{ endpoint_id: number; status: WebhookDeliveryStatus; count: number; last: string | null }>(
    `SELECT endpoint_id, status, COUNT(*) AS count, MAX(delivered_at) AS last FROM webhook_deliveries
     WHERE endpoint_id IN (:ids) GROUP BY endpoint_id, status`,
    { replacements: { ids: endpointIds }, type: QueryTypes.SELECT },
  );
  for (const row of rows) {
    const entry = stats.get(row.endpoint_id) ?? { counts: {}, lastDeliveredAt: null };
    entry.counts[row.status] = Number(row.count);
    // MAX() answers the stored text ('YYYY-MM-DD HH:MM:SS.SSS +00:00', see sqlDate), which Date parses.
    if (row.last) entry.lastDeliveredAt = new Date(row.last).toISOString();
    stats.set(row.endpoint_id, entry);
  }
  return stats;
}

function present(endpoint: WebhookEndpoint, stats?: { counts: WebhookEndpointRecord['counts']; lastDeliveredAt: string | null }): WebhookEndpointRecord {
  return {
    id: endpoint.id,
    url: endpoint.url,
    events: endpoint.events,
    description: endpoint.description,
    active: endpoint.active,
    createdAt: endpoint.createdAt.toISOString(),
    counts: stats?.counts ?? {},
    lastDeliveredAt: stats?.lastDeliveredAt ?? null,
  };
}

/**
 * Registers an endpoint and makes its signing secret (32 random bytes, base64url). The secret is answered this
 * once for the admin to give the receiver; it is stored as it is because each delivery is signed with it (see
 * WebhookEndpoint.secret). Audited without the secret.
 */
export async function registerWebhook(actor: Actor, input: WebhookCreate): Promise<{ id: number; secret: string }> {
  const secret = `${SECRET_PREFIX}${crypto.randomBytes(32).toString('base64url')}`;
  return writeTransaction(async (transaction) => {
    const endpoint = await WebhookEndpoint.create(
      { url: input.url, events: input.events, secret, description: input.description, active: true, createdBy: actor.id },
      { transaction },
    );
    await recordAudit(
      { actorId: actor.id, action: 'webhook.register', entity: 'webhook', entityId: endpoint.id, details: { url: input.url, events: input.events } },
      transaction,
    );
    return { id: endpoint.id, secret };
  });
}

/** Every endpoint, newest first, with its deliveries counted by status. Two queries. */
export async function listWebhooks(): Promise<WebhookEndpointRecord[]> {
  await db();
  const endpoints = await WebhookEndpoint.findAll({ order: [['id', 'DESC']] });
  const stats = await deliveryStats(endpoints.map((e) => e.id));
  return endpoints.map((e) => present(e, stats.get(e.id)));
}

/** Pauses or resumes an endpoint, or changes its events or note. Audited. */
export async function updateWebhook(actor: Actor, id: number, input: WebhookUpdate): Promise<WebhookEndpointRecord> {
  const endpoint = await writeTransaction(async (transaction) => {
    const found = await WebhookEndpoint.findByPk(id, { transaction });
    if (!found) throw new NotFoundError('Webhook');
    await found.update(input, { transaction });
    await recordAudit({ actorId: actor.id, action: 'webhook.update', entity: 'webhook', entityId: id, details: { ...input } }, transaction);
    return found;
  });
  return present(endpoint, (await deliveryStats([id])).get(id));
}

/** Removes an endpoint with its deliveries and their attempts. Audited with its address. */
export async function removeWebhook(actor: Actor, id: number): Promise<void> {
  await writeTransaction(async (transaction) => {
    const found = await WebhookEndpoint.findByPk(id, { transaction });
    if (!found) throw new NotFoundError('Webhook');
    // SQLite enforces ON DELETE CASCADE only with foreign keys on; delete the children explicitly.
    const deliveryIds = (await WebhookDelivery.findAll({ where: { endpointId: id }, attributes: ['id'], transaction })).map((d) => d.id);
    if (deliveryIds.length) await WebhookAttempt.destroy({ where: { deliveryId: deliveryIds }, transaction });
    await WebhookDelivery.destroy({ where: { endpointId: id }, transaction });
    await found.destroy({ transaction });
    await recordAudit(
      { actorId: actor.id, action: 'webhook.remove', entity: 'webhook', entityId: id, details: { url: found.url, events: found.events } },
      transaction,
    );
  });
}

/** One endpoint's deliveries, newest first, each with its attempts: a page of them and the total. */
export async function fetchDeliveries(
  endpointId: number,
  filter: { status?: WebhookDeliveryStatus; page: number; pageSize: number },
): Promise<{ items: WebhookDeliveryRecord[]; total: number }> {
  await db();
  if (!(await WebhookEndpoint.count({ where: { id: endpointId } }))) throw new NotFoundError('Webhook');
  const { rows, count } = await WebhookDelivery.findAndCountAll({
    where: { endpointId, ...(filter.status ? { status: filter.status } : {}) },
    order: [['id', 'DESC']],
    limit: filter.pageSize,
    offset: (filter.page - 1) * filter.pageSize,
  });
  const attempts = rows.length ? await WebhookAttempt.findAll({ where: { deliveryId: rows.map((r) => r.id) }, order: [['id', 'ASC']] }) : [];
  const byDelivery = new Map<number, WebhookAttemptRecord[]>();
  for (const a of attempts) {
    const list = byDelivery.get(a.deliveryId) ?? [];
    list.push({ attemptedAt: a.attemptedAt.toISOString(), durationMs: a.durationMs, statusCode: a.statusCode, error: a.error });
    byDelivery.set(a.deliveryId, list);
  }
  return {
    total: count,
    items: rows.map((d) => ({
      id: d.id,
      event: d.event,
      idempotencyKey: d.idempotencyKey,
      status: d.status,
      attempts: d.attempts,
      nextAttemptAt: d.nextAttemptAt.toISOString(),
      lastStatus: d.lastStatus ?? null,
      lastError: d.lastError ?? null,
      deliveredAt: iso(d.deliveredAt ?? null),
      createdAt: d.createdAt.toISOString(),
      body: d.body,
      attemptLog: byDelivery.get(d.id) ?? [],
    })),
  };
}

/**
 * Puts a failed (or waiting) delivery of this endpoint back at the head of the queue with a fresh attempt budget;
 * its earlier attempts stay in the log. The same body and idempotency key go out, so a receiver that did get it
 * can tell. Audited.
 */
export async function retryDelivery(actor: Actor, endpointId: number, deliveryId: number): Promise<{ id: number; status: WebhookDeliveryStatus }> {
  return writeTransaction(async (transaction) => {
    const delivery = await WebhookDelivery.findOne({ where: { id: deliveryId, endpointId }, transaction });
    if (!delivery) throw new NotFoundError('Delivery');
    if (delivery.status === 'delivered') throw new ConflictError('This delivery has already been received.');
    if (delivery.status === 'sending') throw new ConflictError('This delivery is being sent right now.');
    await delivery.update({ status: 'pending', attempts: 0, nextAttemptAt: new Date(), claimedBy: null }, { transaction });
    await recordAudit(
      { actorId: actor.id, action: 'webhook.retry', entity: 'webhook', entityId: endpointId, details: { deliveryId, event: delivery.event } },
      transaction,
    );
    return { id: delivery.id, status: 'pending' };
  });
}
