import { Op, QueryTypes, type Transaction } from 'sequelize';
import { Alert, AlertEvent, User, roleAtLeast, writeTransaction, OPEN_ALERT_STATES, type AlertState, type Role } from '@/models';
import { ConflictError, ForbiddenError, NotFoundError, UnprocessableError } from '@/lib/http/errors';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { sqlDate } from '@/lib/db/sql-date';
import { escalationMail, signOffMail } from '@/lib/mail/templates';
import { mailEach, watchersOfAlert } from '@/lib/mail/watches';
import { triageActionSchema, type DismissReason, type TriageActionInput, type TriageAction } from '@/lib/schemas/alert';
import { alertEvidence } from './evidence';
import { enqueueWebhookEvent } from '@/lib/webhooks/outbox';
import { alertWebhookPayload } from '@/lib/webhooks/payloads';

interface TriagePolicyEntry {
  /** The states the action applies to, each with the lowest role allowed to take it from there. */
  from: Partial<Record<AlertState, Role>>;
  to: (alert: Pick<Alert, 'state' | 'assigneeId'>) => AlertState;
}

/**
 * Who may do what, from which state. Analysts take, hand on, escalate and dismiss; leads confirm, reopen and
 * decide on what was escalated to them (dismissing an escalated alert is a lead's call). Assigning a new alert
 * also takes it out of the unclaimed pile (→ acknowledged).
 */
export const TRIAGE_POLICY: Record<TriageAction, TriagePolicyEntry> = {
  acknowledge: { from: { new: 'analyst' }, to: () => 'acknowledged' },
  assign: { from: { new: 'analyst', acknowledged: 'analyst', escalated: 'analyst' }, to: (a) => (a.state === 'new' ? 'acknowledged' : a.state) },
  escalate: { from: { new: 'analyst', acknowledged: 'analyst' }, to: () => 'escalated' },
  confirm: { from: { acknowledged: 'lead', escalated: 'lead' }, to: () => 'confirmed' },
  dismiss: { from: { new: 'analyst', acknowledged: 'analyst', escalated: 'lead' }, to: () => 'dismissed' },
  reopen: { from: { confirmed: 'lead', dismissed: 'lead' }, to: (a) => (a.assigneeId !== null ? 'acknowledged' : 'new') },
};

/** The actions `role` may take on an alert in `state` (for the buttons a screen shows). */
export function allowedActions(state: AlertState, role: Role): TriageAction[] {
  return (Object.keys(TRIAGE_POLICY) as TriageAction[]).filter((action) => {
    const minimum = TRIAGE_POLICY[action].from[state];
    return minimum !== undefined && roleAtLeast(role, minimum);
  });
}

export interface TriageResult {
  id: number;
  state: AlertState;
  version: number;
  assigneeId: number | null;
  eventId: number;
}

async function activeLeads(transaction: Transaction): Promise<User[]> {
  const leads = await User.findAll({ where: { role: 'lead', active: true }, order: [['id', 'ASC']], transaction });
  // A team without a lead still needs someone to decide: admins then get the escalation.
  return leads.length ? leads : User.findAll({ where: { role: 'admin', active: true }, order: [['id', 'ASC']], transaction });
}

/**
 * Applies one triage action in one IMMEDIATE transaction: checks the triage policy for the alert's current
 * state and the actor's role, then writes with a compare-and-set on id + version + state. Of two concurrent
 * actions exactly one wins; the other finds the alert changed and gets 409. The timeline event, the audit entry,
 * any mail (escalation to leads, sign-off to watchers) and webhook deliveries (escalated, decided) are written in
 * the same transaction.
 */
export async function applyTriageAction(alertId: number, input: TriageActionInput, actor: Actor): Promise<TriageResult> {
  const command = triageActionSchema.parse(input);
  const rule = TRIAGE_POLICY[command.action];
  return writeTransaction(async (transaction) => {
    const alert = await Alert.findByPk(alertId, { transaction });
    if (!alert) throw new NotFoundError('Alert');
    if (command.version !== undefined && command.version !== alert.version)
      throw new ConflictError(`The alert changed since you loaded it (it is now ${alert.state}). Reload and decide again.`);
    const minimum = rule.from[alert.state];
    if (minimum === undefined) throw new ConflictError(`An alert that is ${alert.state} cannot be ${pastTense(command.action)}.`);
    if (!roleAtLeast(actor.role, minimum))
      throw new ForbiddenError(`To ${command.action} an alert that is ${alert.state} needs the ${minimum} role or higher.`);

    let assigneeId = alert.assigneeId;
    if (command.action === 'acknowledge') assigneeId = actor.id;
    if (command.action === 'assign') {
      const assignee = await User.findByPk(command.assignee!, { transaction });
      if (!assignee || !assignee.active || !roleAtLeast(assignee.role, 'analyst'))
        throw new UnprocessableError('Assign the alert to an active analyst, lead or admin.', { assignee: ['Not an active analyst, lead or admin.'] });
      assigneeId = assignee.id;
    }
    // Abrupt-shift alerts have no rule: each is one shift, and several may be open at once.
    if (command.action === 'reopen' && alert.ruleId !== null) {
      const other = await Alert.findOne({
        where: { seriesId: alert.seriesId, ruleId: alert.ruleId, state: { [Op.in]: [...OPEN_ALERT_STATES] }, id: { [Op.ne]: alert.id } },
        transaction,
      });
      if (other) throw new ConflictError(`Alert #${other.id} for the same series and rule is open; work on that one instead.`);
    }
    const to = rule.to(alert);
    const closing = to === 'confirmed' || to === 'dismissed';
    const now = Date.now();
    const updated = await alert.sequelize.query<{ version: number }>(
      `UPDATE alerts SET state = :to, assignee_id = :assigneeId, closed_at = :closedAt, dismiss_reason = :dismissReason,
         version = version + 1, updated_at = :now
       WHERE id = :id AND version = :version AND state = :from
       RETURNING version`,
      {
        replacements: {
          id: alert.id,
          version: alert.version,
          from: alert.state,
          to,
          assigneeId,
          closedAt: closing ? sqlDate(now) : null,
          dismissReason: to === 'dismissed' ? (command.reason as DismissReason) : null,
          now: sqlDate(now),
        },
        type: QueryTypes.SELECT,
        transaction,
      },
    );
    if (updated.length !== 1) throw new ConflictError('Someone else changed this alert at the same moment. Reload and decide again.');
    const event = await AlertEvent.create(
      {
        alertId: alert.id,
        actorId: actor.id,
        action: command.action,
        fromState: alert.state,
        toState: to,
        reason: command.reason ?? null,
        detail: command.note || (command.action === 'assign' ? `Assigned to user #${assigneeId}.` : null),
      },
      { transaction },
    );
    await recordAudit(
      {
        actorId: actor.id,
        action: `alert.${command.action}`,
        entity: 'alert',
        entityId: alert.id,
        details: { from: alert.state, to, reason: command.reason ?? null, assigneeId },
      },
      transaction,
    );
    const webhookEvent =
      command.action === 'escalate' ? 'alert.escalated' : command.action === 'confirm' || command.action === 'dismiss' ? 'alert.decided' : null;
    const evidence = webhookEvent ? await alertEvidence(alert, transaction) : null;
    if (webhookEvent && evidence) {
      const change = { eventId: event.id, by: actor.name, state: to, note: command.note || null, reason: command.reason ?? null };
      await enqueueWebhookEvent(webhookEvent, alertWebhookPayload(webhookEvent, evidence, change, new Date(now)), transaction);
    }
    if (evidence && (command.action === 'escalate' || command.action === 'confirm')) {
      const note = command.note || null;
      const [mail, recipients, kind] =
        command.action === 'escalate'
          ? [escalationMail(evidence, actor.name, note), await activeLeads(transaction), 'alert-escalated']
          : [signOffMail(evidence, actor.name, note), await watchersOfAlert(alert, ['immediate', 'digest'], transaction), 'alert-confirmed'];
      await mailEach(recipients, kind, `${alert.id}:event-${event.id}`, mail, transaction);
    }
    return { id: alert.id, state: to, version: updated[0].version, assigneeId, eventId: event.id };
  });
}

function pastTense(action: TriageAction): string {
  return { acknowledge: 'acknowledged', assign: 'assigned', escalate: 'escalated', confirm: 'confirmed', dismiss: 'dismissed', reopen: 'reopened' }[action];
}

type Options = { version?: number; note?: string };

export const acknowledgeAlert = (id: number, actor: Actor, options: Options = {}) => applyTriageAction(id, { action: 'acknowledge', ...options }, actor);
export const assignAlert = (id: number, assignee: number, actor: Actor, options: Options = {}) =>
  applyTriageAction(id, { action: 'assign', assignee, ...options }, actor);
export const escalateAlert = (id: number, actor: Actor, options: Options = {}) => applyTriageAction(id, { action: 'escalate', ...options }, actor);
export const confirmAlert = (id: number, actor: Actor, options: Options = {}) => applyTriageAction(id, { action: 'confirm', ...options }, actor);
export const dismissAlert = (id: number, reason: DismissReason, actor: Actor, options: Options = {}) =>
  applyTriageAction(id, { action: 'dismiss', reason, ...options }, actor);
export const reopenAlert = (id: number, actor: Actor, options: Options = {}) => applyTriageAction(id, { action: 'reopen', ...options }, actor);
