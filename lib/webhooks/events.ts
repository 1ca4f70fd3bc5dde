/**
 * The events an endpoint may subscribe to, with the words the admin screen shows. Browser-safe (no database):
 * the registration form and the API's schema read the same list.
 * `data.late` is enqueued where the freshness pass opens a data-late alert (lib/alerts/lateness.ts).
 */
export const WEBHOOK_EVENTS = ['alert.opened', 'alert.abrupt-shift', 'alert.escalated', 'alert.decided', 'intake.rejected', 'data.late'] as const;
export type WebhookEvent = (typeof WEBHOOK_EVENTS)[number];

export const WEBHOOK_EVENT_LABELS: Record<WebhookEvent, string> = {
  'alert.opened': 'A rule opened an alert (trend in an indicator)',
  'alert.abrupt-shift': 'An abrupt shift in a record opened an alert',
  'alert.escalated': 'An alert was escalated to the leads',
  'alert.decided': 'An alert was decided (confirmed or dismissed)',
  'intake.rejected': 'An ingest run was rejected (nothing stored)',
  'data.late': 'A series went silent for longer than its allowance (a data-late alert)',
};
