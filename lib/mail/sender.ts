import crypto from 'node:crypto';
import nodemailer from 'nodemailer';
import { claimLock } from '@/lib/db/dialect';
import { QueryTypes } from 'sequelize';
import { db } from '@/models';
import { mailFrom, mailRetryPolicy, smtpUrl } from '@/lib/runtime/config';
import { PROCESS_HOLDER } from '@/lib/db/leases';
import { sqlDate } from '@/lib/db/sql-date';

/** How long a 'sending' claim protects a message; past it, the claim counts as abandoned (its sender died). */
export const CLAIM_TTL_MS = 120_000;
const BATCH = 25;

interface ClaimedRow {
  id: number;
  dedupe_key: string;
  to_address: string;
  subject: string;
  text_body: string;
  html_body: string;
  attempts: number;
}

/** Wait before the next attempt after `attempts` failures: min(base·2^(attempts−1), max). O(1). Common practice (exponential backoff). */
export function retryDelayMs(attempts: number, policy = mailRetryPolicy()): number {
  return Math.min(policy.maxMs, policy.baseMs * 2 ** Math.max(0, attempts - 1));
}

/**
 * A stable Message-ID derived from the dedupe key: if a sender dies after the server accepted a message but
 * before it recorded the fact, the retry carries the same Message-ID and mail clients show it once.
 */
export function messageIdFor(dedupeKey: string): string {
  return `<${crypto.createHash('sha256').update(dedupeKey).digest('hex').slice(0, 32)}@brinkwatch>`;
}

/**
 * Claims due messages in one statement: pending ones whose time has come, and 'sending' ones whose claim has
 * expired. The UPDATE … RETURNING runs under SQLite's write lock, so two schedulers never claim the same row.
 */
async function claimDue(claim: string, now: number): Promise<ClaimedRow[]> {
  const sequelize = await db();
  return sequelize.query<ClaimedRow>(
    `UPDATE mail_outbox SET status = 'sending', claimed_by = :claim, next_attempt_at = :until, updated_at = :nowIso
     WHERE id IN (
       SELECT id FROM mail_outbox WHERE status IN ('pending', 'sending') AND next_attempt_at <= :nowIso
       ORDER BY next_attempt_at, id LIMIT :batch${claimLock(sequelize)})
     RETURNING id, dedupe_key, to_address, subject, text_body, html_body, attempts`,
    {
      replacements: { claim, nowIso: sqlDate(now), until: sqlDate(now + CLAIM_TTL_MS), batch: BATCH },
      type: QueryTypes.SELECT,
    },
  );
}

async function finish(id: number, claim: string, fields: Record<string, unknown>): Promise<void> {
  const sequelize = await db();
  const sets = Object.keys(fields)
    .map((k) => `${k} = :${k}`)
    .join(', ');
  // Only the holder of the claim may settle the row; a sender whose claim was taken over leaves it alone.
  await sequelize.query(`UPDATE mail_outbox SET ${sets}, claimed_by = NULL, updated_at = :updatedAt WHERE id = :id AND claimed_by = :claim`, {
    replacements: { ...fields, id, claim, updatedAt: sqlDate(Date.now()) },
  });
}

export interface SendReport {
  claimed: number;
  sent: number;
  failed: number;
}

/**
 * One pass of the outbox: claim due messages, send each over SMTP, record the outcome. A failure schedules the
 * next attempt with exponential backoff; after the attempt budget the message is marked failed for an admin.
 */
export async function deliverDueMail(now = Date.now()): Promise<SendReport> {
  const claim = `${PROCESS_HOLDER}:${crypto.randomBytes(4).toString('hex')}`;
  const rows = await claimDue(claim, now);
  const report: SendReport = { claimed: rows.length, sent: 0, failed: 0 };
  if (!rows.length) return report;
  const policy = mailRetryPolicy();
  // Fail fast when the server is down; the next pass retries.
  const transport = nodemailer.createTransport({ url: smtpUrl(), connectionTimeout: 5000, greetingTimeout: 5000, socketTimeout: 15000 });
  try {
    for (const row of rows) {
      const attempts = row.attempts + 1;
      try {
        const info = await transport.sendMail({
          from: mailFrom(),
          to: row.to_address,
          subject: row.subject,
          text: row.text_body,
          html: row.html_body,
          messageId: messageIdFor(row.dedupe_key),
        });
        await finish(row.id, claim, { status: 'sent', attempts, sent_at: sqlDate(Date.now()), message_id: info.messageId ?? null, last_error: null });
        report.sent++;
      } catch (error) {
        const message = error instanceof Error ? error.message : String(error);
        const giveUp = attempts >= policy.maxAttempts;
        await finish(row.id, claim, {
          status: giveUp ? 'failed' : 'pending',
          attempts,
          last_error: message.slice(0, 2000),
          next_attempt_at: sqlDate(Date.now() + retryDelayMs(attempts, policy)),
        });
        report.failed++;
      }
    }
  } finally {
    transport.close();
  }
  return report;
}
