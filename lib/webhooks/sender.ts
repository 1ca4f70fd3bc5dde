import crypto from 'node:crypto';
import { Op, QueryTypes } from 'sequelize';
import { claimLock } from '@/lib/db/dialect';
import { WebhookAttempt, WebhookEndpoint, db, writeTransaction } from '@/models';
import { PROCESS_HOLDER } from '@/lib/db/leases';
import { sqlDate } from '@/lib/db/sql-date';
import { retryDelayMs } from '@/lib/mail/sender';
import { webhookSignature } from './signature';

/**
 * Retries: the n-th failed attempt waits min(10 s·2^(n−1), 1 h); after 15 attempts (about six and a half hours of
 * trying) the delivery is marked failed for an admin to retry. Long enough for a receiver's maintenance window or
 * an afternoon's outage; common practice (exponential backoff), the numbers are ours.
 */
export const WEBHOOK_RETRY_POLICY = { baseMs: 10_000, maxMs: 3_600_000, maxAttempts: 15 };
/** One request may take this long; a receiver that hangs costs one attempt, not the job. */
const WEBHOOK_TIMEOUT_MS = 10_000;
/**
 * How long a 'sending' claim protects a delivery; past it the claim counts as abandoned (its sender died). Far
 * above the request timeout, since a batch is sent at once and settled within about one timeout.
 */
const WEBHOOK_CLAIM_TTL_MS = 60_000;
const BATCH = 20;
/** How much of a refusing receiver's answer the attempt log keeps. */
const ANSWER_KEPT = 500;

interface ClaimedDelivery {
  id: number;
  endpoint_id: number;
  event: string;
  idempotency_key: string;
  body: string;
  attempts: number;
}

/**
 * Claims due deliveries of active endpoints in one statement: pending ones whose time has come and 'sending' ones
 * whose claim expired. The UPDATE … RETURNING runs under SQLite's write lock, so two schedulers never claim the
 * same row (as the mail sender claims mail).
 */
async function claimDue(claim: string, now: number): Promise<ClaimedDelivery[]> {
  const sequelize = await db();
  return sequelize.query<ClaimedDelivery>(
    `UPDATE webhook_deliveries SET status = 'sending', claimed_by = :claim, next_attempt_at = :until, updated_at = :nowIso
     WHERE id IN (
       SELECT d.id FROM webhook_deliveries d JOIN webhook_endpoints e ON e.id = d.endpoint_id
       WHERE d.status IN ('pending', 'sending') AND d.next_attempt_at <= :nowIso AND e.active
       ORDER BY d.next_attempt_at, d.id LIMIT :batch${claimLock(sequelize, 'd')})
     RETURNING id, endpoint_id, event, idempotency_key, body, attempts`,
    { replacements: { claim, nowIso: sqlDate(now), until: sqlDate(now + WEBHOOK_CLAIM_TTL_MS), batch: BATCH }, type: QueryTypes.SELECT },
  );
}

interface AttemptOutcome {
  statusCode: number | null;
  error: string | null;
  durationMs: number;
}

/** The first ANSWER_KEPT characters of an answer's body, without reading more of it. */
async function answerStart(response: Response): Promise<string> {
  if (!response.body) return '';
  const reader = response.body.getReader();
  const chunks: Uint8Array[] = [];
  let size = 0;
  while (size < ANSWER_KEPT * 4) {
    const { done, value } = await reader.read();
    if (done) break;
    chunks.push(value);
    size += value.byteLength;
  }
  await reader.cancel().catch(() => undefined);
  return Buffer.concat(chunks).toString('utf8').replace(/\s+/g, ' ').trim().slice(0, ANSWER_KEPT);
}

/**
 * POSTs the raw body with its event, timestamp, signature and idempotency key. Redirects are not followed: the
 * address an admin registered (https, or loopback http) is the only place a signed body goes. 2xx = delivered.
 */
async function post(url: string, secret: string, delivery: ClaimedDelivery, timeoutMs: number): Promise<AttemptOutcome> {
  const timestamp = Math.floor(Date.now() / 1000);
  const started = Date.now();
  try {
    const response = await fetch(url, {
      method: 'POST',
      headers: {
        'content-type': 'application/json',
        'user-agent': 'Brinkwatch-Webhooks/1',
        'x-brinkwatch-event': delivery.event,
        'x-brinkwatch-timestamp': String(timestamp),
        'x-brinkwatch-signature': webhookSignature(secret, timestamp, delivery.body),
        'idempotency-key': delivery.idempotency_key,
      },
      body: delivery.body,
      redirect: 'manual',
      signal: AbortSignal.timeout(timeoutMs),
    });
    const ok = response.status >= 200 && response.status < 300;
    const answer = ok ? (await response.body?.cancel().catch(() => undefined), '') : await answerStart(response).catch(() => '');
    return { statusCode: response.status, error: ok ? null : `HTTP ${response.status}${answer ? `: ${answer}` : ''}`, durationMs: Date.now() - started };
  } catch (error) {
    const cause = (error as { cause?: { code?: string; message?: string } }).cause;
    const timedOut = (error as { name?: string }).name === 'TimeoutError';
    const message = timedOut
      ? `no answer within ${timeoutMs / 1000} s`
      : (cause?.code ?? cause?.message ?? (error instanceof Error ? error.message : String(error)));
    return { statusCode: null, error: message.slice(0, 2000), durationMs: Date.now() - started };
  }
}

export interface WebhookSendReport {
  claimed: number;
  delivered: number;
  /** attempts that failed and will be tried again */
  retrying: number;
  /** deliveries that used their last attempt and are now 'failed' */
  failed: number;
}

/**
 * One pass of the webhook outbox: claim due deliveries, POST each (all of a batch at once, each within
 * `timeoutMs`), record every attempt and settle the delivery — delivered on 2xx, otherwise retried after
 * retryDelayMs(attempts) from `now`, or failed once the attempt budget is spent. `now` is the pass's clock, so a
 * test can run the pass as if time had passed. Only the claim's holder settles a row.
 */
export async function deliverDueWebhooks(now = Date.now(), timeoutMs = WEBHOOK_TIMEOUT_MS): Promise<WebhookSendReport> {
  const claim = `${PROCESS_HOLDER}:${crypto.randomBytes(4).toString('hex')}`;
  const rows = await claimDue(claim, now);
  const report: WebhookSendReport = { claimed: rows.length, delivered: 0, retrying: 0, failed: 0 };
  if (!rows.length) return report;
  const endpoints = new Map(
    (await WebhookEndpoint.findAll({ where: { id: { [Op.in]: [...new Set(rows.map((r) => r.endpoint_id))] } }, attributes: ['id', 'url', 'secret'] })).map(
      (e) => [e.id, e],
    ),
  );
  const sequelize = await db();
  // Requests go out together; their outcomes are written one at a time. Concurrent write transactions in one
  // process would each hold a libuv thread while waiting for SQLite's lock, and enough of them starve the holder.
  let settled: Promise<unknown> = Promise.resolve();
  const settleInTurn = (write: () => Promise<void>) => {
    const turn = settled.then(write);
    settled = turn.catch(() => undefined);
    return turn;
  };
  await Promise.all(
    rows.map(async (row) => {
      const endpoint = endpoints.get(row.endpoint_id);
      // Removed between the claim and here: its deliveries went with it.
      if (!endpoint) return;
      const outcome = await post(endpoint.url, endpoint.secret, row, timeoutMs);
      const attempts = row.attempts + 1;
      const delivered = outcome.error === null;
      const giveUp = !delivered && attempts >= WEBHOOK_RETRY_POLICY.maxAttempts;
      await settleInTurn(() =>
        writeTransaction(async (transaction) => {
          await WebhookAttempt.create(
            { deliveryId: row.id, attemptedAt: new Date(now), durationMs: outcome.durationMs, statusCode: outcome.statusCode, error: outcome.error },
            { transaction },
          );
          await sequelize.query(
            `UPDATE webhook_deliveries SET status = :status, attempts = :attempts, last_status = :statusCode, last_error = :error,
             next_attempt_at = :next, delivered_at = :deliveredAt, claimed_by = NULL, updated_at = :nowIso
           WHERE id = :id AND claimed_by = :claim`,
            {
              replacements: {
                id: row.id,
                claim,
                status: delivered ? 'delivered' : giveUp ? 'failed' : 'pending',
                attempts,
                statusCode: outcome.statusCode,
                error: outcome.error,
                next: sqlDate(delivered || giveUp ? now : now + retryDelayMs(attempts, WEBHOOK_RETRY_POLICY)),
                deliveredAt: delivered ? sqlDate(now) : null,
                nowIso: sqlDate(now),
              },
              transaction,
            },
          );
        }),
      );
      if (delivered) report.delivered++;
      else if (giveUp) report.failed++;
      else report.retrying++;
    }),
  );
  return report;
}
