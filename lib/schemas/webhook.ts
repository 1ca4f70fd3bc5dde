import { z } from 'zod';
import { WEBHOOK_EVENTS } from '@/lib/webhooks/events';

/** Hosts plain http may go to: this machine only, so a signed alert never crosses a network unencrypted. */
const LOOPBACK_HOSTS = new Set(['127.0.0.1', '[::1]', 'localhost']);

/**
 * Why `value` cannot be an endpoint's address, or null when it can: https:// anywhere, http:// only to loopback
 * (127.0.0.1, ::1, localhost); no user or password in it (the list shows addresses to every admin). O(length).
 */
export function webhookUrlProblem(value: string): string | null {
  let url: URL;
  try {
    url = new URL(value);
  } catch {
    return 'Give a full address, e.g. https://hooks.example.org/brinkwatch.';
  }
  if (url.username || url.password) return 'Leave user and password out of the address; the signature authenticates each delivery.';
  if (url.protocol === 'https:') return null;
  if (url.protocol === 'http:')
    return LOOPBACK_HOSTS.has(url.hostname.toLowerCase()) ? null : 'Plain http:// is allowed only to this machine (127.0.0.1, ::1, localhost); use https://.';
  return 'The address must start with https:// (or http:// to this machine).';
}

const events = z
  .array(z.enum(WEBHOOK_EVENTS))
  .min(1, 'Choose at least one event.')
  .transform((list) => [...new Set(list)]);

/** POST /api/webhooks: where to deliver, which events, and a note saying what the receiver is. */
export const webhookCreateSchema = z
  .object({
    url: z
      .string()
      .trim()
      .max(2000)
      .superRefine((value, ctx) => {
        const problem = webhookUrlProblem(value);
        if (problem) ctx.addIssue({ code: 'custom', message: problem });
      }),
    events,
    description: z.string().trim().max(200).optional().default(''),
  })
  .strict();
export type WebhookCreate = z.output<typeof webhookCreateSchema>;

/** PATCH /api/webhooks/{id}: pause or resume, change the events or the note. */
export const webhookUpdateSchema = z
  .object({
    active: z.boolean().optional(),
    events: events.optional(),
    description: z.string().trim().max(200).optional(),
  })
  .strict();
export type WebhookUpdate = z.output<typeof webhookUpdateSchema>;

const WEBHOOK_DELIVERY_STATUSES = ['pending', 'sending', 'delivered', 'failed'] as const;
export type WebhookDeliveryStatus = (typeof WEBHOOK_DELIVERY_STATUSES)[number];

/** GET /api/webhooks/{id}/deliveries: filter by status, paged. */
export const webhookDeliveriesQuerySchema = z.object({
  status: z.enum(WEBHOOK_DELIVERY_STATUSES).optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(25),
});
