/**
 * The events an endpoint may subscribe to, with the words the admin screen shows. Browser-safe (no database):
 * the registration form and the API's schema read the same list.
 *
 * Data lateness has no detection in the product yet, so there is no `data.late` event; add it here (and enqueue
 * it where lateness is detected) once there is.
 */
export const WEBHOOK_EVENTS = ['alert.opened', 'alert.abrupt-shift', 'alert.escalated', 'alert.decided', 'intake.rejected'] as const;
export type WebhookEvent = (typeof WEBHOOK_EVENTS)[number];

export const WEBHOOK_EVENT_LABELS: Record<WebhookEvent, string> = {
  'alert.opened': 'A rule opened an alert (trend in an indicator)',
  'alert.abrupt-shift': 'An abrupt shift in a record opened an alert',
  'alert.escalated': 'An alert was escalated to the leads',
  'alert.decided': 'An alert was decided (confirmed or dismissed)',
  'intake.rejected': 'An ingest run was rejected (nothing stored)',
};
