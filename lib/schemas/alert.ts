import { z } from 'zod';
import { ALERT_KINDS, ALERT_STATES } from '@/models/Alert';
import { WATCH_MODES } from '@/models/Watch';

export const TRIAGE_ACTIONS = ['acknowledge', 'assign', 'escalate', 'confirm', 'dismiss', 'reopen'] as const;
export type TriageAction = (typeof TRIAGE_ACTIONS)[number];

/** Why an alert was set aside; the analyst adds free text for the specifics. */
export const DISMISS_REASONS = ['instrument-fault', 'data-gap-or-artefact', 'seasonal-or-external-forcing', 'statistical-fluke', 'other'] as const;
export type DismissReason = (typeof DISMISS_REASONS)[number];

export const triageActionSchema = z
  .object({
    action: z.enum(TRIAGE_ACTIONS),
    reason: z.enum(DISMISS_REASONS).optional(),
    note: z.string().trim().max(10_000).optional(),
    assignee: z.number().int().positive().optional(),
    /** The alert version the client saw; a stale one loses with 409 instead of overwriting a colleague's decision. */
    version: z.number().int().positive().optional(),
  })
  .strict()
  .superRefine((value, ctx) => {
    if (value.action === 'dismiss' && !value.reason) ctx.addIssue({ code: 'custom', path: ['reason'], message: 'A dismissal needs a reason category.' });
    if (value.action === 'dismiss' && value.reason === 'other' && !value.note)
      ctx.addIssue({ code: 'custom', path: ['note'], message: 'Say what "other" means in a note.' });
    if (value.action === 'assign' && value.assignee === undefined) ctx.addIssue({ code: 'custom', path: ['assignee'], message: 'Choose whom to assign.' });
  });
export type TriageActionInput = z.output<typeof triageActionSchema>;

export const noteSchema = z.object({ body: z.string().trim().min(1).max(10_000) }).strict();

const ALERT_QUEUES = ['triage', 'escalated', 'mine', 'closed', 'all'] as const;
export type AlertQueue = (typeof ALERT_QUEUES)[number];
const ALERT_SORTS = ['newest', 'oldest', 'severity', 'tau', 'updated'] as const;

/**
 * Queue filters. `age` is a number of hours or days with an optional direction: `7d` or `<7d` = opened within
 * the last 7 days, `>2d` = waiting longer than 2 days.
 */
export const alertQueueSchema = z.object({
  queue: z.enum(ALERT_QUEUES).default('triage'),
  state: z.enum(ALERT_STATES).optional(),
  series: z.string().max(64).optional(),
  /** a site's slug: the alerts on the site itself and on any of its series */
  site: z.string().max(64).optional(),
  severity: z.enum(['watch', 'warning']).optional(),
  /** 'slowing-down' (rule alerts) or 'abrupt-shift' */
  kind: z.enum(ALERT_KINDS).optional(),
  age: z
    .string()
    .regex(/^[<>]?\d{1,5}[hd]$/, 'Use e.g. 24h, <7d or >2d.')
    .optional(),
  sort: z.enum(ALERT_SORTS).default('newest'),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(100).default(25),
});
export type AlertQueueQuery = z.output<typeof alertQueueSchema>;

export const watchSchema = z.object({ mode: z.enum(WATCH_MODES) }).strict();
/** Body of PUT /api/series/{slug}/watchers: a lead sets how each listed user hears of the series' alerts. */
export const watchersUpdateSchema = z
  .object({
    watchers: z
      .array(z.object({ userId: z.number().int().positive(), mode: z.enum(WATCH_MODES) }).strict())
      .min(1)
      .max(1000),
  })
  .strict();
