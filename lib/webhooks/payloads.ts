import { ANALYSIS_CAUTION } from '@/lib/engine/analyze';
import { indicatorLabel } from '@/lib/display/analysis-labels';
import { formatUtc, formatValue } from '@/lib/display/format';
import { tauWithDirection } from '@/lib/alerts/wording';
import { publicBaseUrl } from '@/lib/runtime/config';
import type { AlertEvidence } from '@/lib/mail/templates';
import type { WebhookEvent } from './events';

/**
 * An event's id: what it is about (the event, the alert or run, the timeline entry) and when it happened, to the
 * millisecond. The database ids alone would come round again after a restore from backup or on a new installation
 * sending to the same receiver, which would then skip a new event as one already handled.
 */
function eventId(subject: string, occurredAt: Date): string {
  return `${subject}@${occurredAt.toISOString()}`;
}

/**
 * What every delivery's JSON body holds. Shaped for any chat or ticket tool without naming one: `title` is a
 * ticket's subject, `text` one line a chat tool can post as it is, `url` the page to open; the structured parts
 * (`series`, `alert`, `run`) are there for tools that map fields. `id` is also the `Idempotency-Key` header.
 */
export interface WebhookPayload {
  id: string;
  event: WebhookEvent;
  /** ISO 8601, UTC */
  occurredAt: string;
  title: string;
  text: string;
  url: string;
  severity?: 'watch' | 'warning';
  /** the series an event is about; null for an alert on a whole site (then `site` names it) */
  series: { slug: string; name: string; site: string } | null;
  /** a site alert's site and the member series analysed together */
  site?: { slug: string; name: string; members: string[] };
  alert?: {
    id: number;
    kind: 'slowing-down' | 'abrupt-shift' | 'data-late' | 'site-slowing-down';
    /** the state the event left the alert in */
    state: string;
    severity: 'watch' | 'warning';
    /** the indicator's plain name; null for an abrupt shift */
    indicator: string | null;
    direction: string | null;
    tau: number | null;
    surrogateP: number | null;
    shift: { time: string; size: number | null } | null;
    /** decided alerts: what was decided, why (dismissals), by whom, with which note */
    decision?: 'confirmed' | 'dismissed';
    reason?: string | null;
    by?: string;
    note?: string | null;
  };
  run?: { id: number; source: string; fileName: string | null; status: string; rowsRead: number; rejected: number; message: string };
  /** data.late: the last reading before the silence and the allowance it exceeded */
  silence?: { lastDataAt: string; lateAfterMs: number };
  caution?: string;
}

/** A triage step that an event reports: who took it, which timeline event it is, and what it left. */
export interface AlertChange {
  eventId: number;
  by: string;
  state: string;
  note: string | null;
  reason?: string | null;
}

/** `text` is posted by chat tools as it is: one line, whatever a run's message or a note held. */
const oneLine = (text: string) => text.replace(/\s+/g, ' ').trim();
const level = (severity: string) => (severity === 'warning' ? 'Warning' : 'Watch');
const seriesPart = (e: AlertEvidence) => ({ slug: e.series.slug, name: e.series.name, site: e.series.site });
const where = (s: { name: string; site: string }) => (s.site ? `${s.name} (${s.site})` : s.name);

function alertHeadline(e: AlertEvidence): string {
  if (e.kind === 'abrupt-shift') {
    const size = e.shift?.size !== null && e.shift?.size !== undefined ? ` of ${formatValue(e.shift.size)}` : '';
    return `abrupt shift${size} at ${formatUtc(e.shift?.time ?? null)}`;
  }
  return `${indicatorLabel(e.indicator ?? '')} trend, Kendall τ ${tauWithDirection(e.tau, e.direction)}`;
}

/**
 * The body of an alert event. `change` is the triage step behind escalated and decided events (null when the
 * analysis opened the alert). The event's id names the alert and, for triage, its timeline event, so a second
 * escalation after a reopen is a new event while a repeated enqueue of the same one is not. O(1).
 */
export function alertWebhookPayload(
  event: Exclude<WebhookEvent, 'intake.rejected' | 'data.late'>,
  e: AlertEvidence,
  change: AlertChange | null,
  occurredAt: Date,
): WebhookPayload {
  const url = `${publicBaseUrl()}/alerts/${e.alertId}`;
  const headline = alertHeadline(e);
  const subject = where(e.series);
  const decision = event === 'alert.decided' ? (change?.state === 'dismissed' ? 'dismissed' : 'confirmed') : undefined;
  const title = {
    'alert.opened': `${level(e.severity)}: ${indicatorLabel(e.indicator ?? '')} trend on ${e.series.name} (alert #${e.alertId})`,
    'alert.abrupt-shift': `${level(e.severity)}: abrupt shift on ${e.series.name} (alert #${e.alertId})`,
    'alert.escalated': `Escalated to leads: ${e.series.name} (alert #${e.alertId})`,
    'alert.decided': `${decision === 'dismissed' ? 'Dismissed' : 'Confirmed'}: ${e.series.name} (alert #${e.alertId})`,
  }[event];
  const what = {
    'alert.opened': `${level(e.severity)} on ${subject}: ${headline}`,
    'alert.abrupt-shift': `${level(e.severity)} on ${subject}: ${headline}`,
    'alert.escalated': `Alert #${e.alertId} on ${subject} (${headline}) escalated to leads by ${change?.by ?? 'someone'}`,
    'alert.decided': `Alert #${e.alertId} on ${subject} (${headline}) ${decision}${change?.reason ? ` as ${change.reason}` : ''} by ${change?.by ?? 'someone'}`,
  }[event];
  return {
    id: eventId(change ? `${event}:alert-${e.alertId}:event-${change.eventId}` : `${event}:alert-${e.alertId}`, occurredAt),
    event,
    occurredAt: occurredAt.toISOString(),
    title,
    text: oneLine(`Brinkwatch ${what}. ${url}`),
    url,
    severity: e.severity,
    ...(e.siteMembers ? { series: null, site: { slug: e.series.slug, name: e.series.site, members: e.siteMembers } } : { series: seriesPart(e) }),
    alert: {
      id: e.alertId,
      kind: e.kind,
      state: change?.state ?? 'new',
      severity: e.severity,
      indicator: e.indicator ? indicatorLabel(e.indicator) : null,
      direction: e.kind === 'abrupt-shift' ? null : e.direction,
      tau: e.tau,
      surrogateP: e.surrogateP,
      shift: e.shift ? { time: new Date(e.shift.time).toISOString(), size: e.shift.size } : null,
      ...(change ? { by: change.by, note: change.note } : {}),
      ...(decision ? { decision, reason: change?.reason ?? null } : {}),
    },
    caution: ANALYSIS_CAUTION,
  };
}

/** The fields of an ingest run the rejection event reports. */
export interface RejectedRun {
  id: number;
  source: string;
  fileName: string | null;
  rowsRead: number;
  rejected: number;
  message: string;
}

/** The body of `intake.rejected`: a file, upload or push that stored nothing, with the run's own message. O(1). */
export function rejectedRunPayload(run: RejectedRun, series: { slug: string; name: string; site: string }, occurredAt: Date): WebhookPayload {
  const url = `${publicBaseUrl()}/intake`;
  const file = run.fileName ? ` (${run.fileName})` : '';
  return {
    id: eventId(`intake.rejected:run-${run.id}`, occurredAt),
    event: 'intake.rejected',
    occurredAt: occurredAt.toISOString(),
    title: `Ingest run #${run.id} rejected: ${series.name}`,
    text: oneLine(`Brinkwatch rejected ${run.source} run #${run.id}${file} for ${where(series)}: ${run.message} ${url}`),
    url,
    series: { slug: series.slug, name: series.name, site: series.site },
    run: { ...run, status: 'rejected' },
  };
}

/** The body of `data.late`: the data-late alert a silent series opened, with the last reading and the allowance. O(1). */
export function dataLatePayload(
  late: { alertId: number; lastDataAt: number; lateAfterMs: number },
  series: { slug: string; name: string; site: string },
  occurredAt: Date,
): WebhookPayload {
  const url = `${publicBaseUrl()}/alerts/${late.alertId}`;
  const hours = Math.round(late.lateAfterMs / 360_000) / 10;
  return {
    id: eventId(`data.late:alert-${late.alertId}`, occurredAt),
    event: 'data.late',
    occurredAt: occurredAt.toISOString(),
    title: `Data late: ${series.name} (alert #${late.alertId})`,
    text: oneLine(`Brinkwatch: no data from ${where(series)} since ${formatUtc(late.lastDataAt)}, longer than its allowance of ${hours} h. ${url}`),
    url,
    severity: 'warning',
    series: { slug: series.slug, name: series.name, site: series.site },
    silence: { lastDataAt: new Date(late.lastDataAt).toISOString(), lateAfterMs: late.lateAfterMs },
  };
}
