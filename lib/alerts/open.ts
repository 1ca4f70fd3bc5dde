import type { CreationAttributes, Transaction } from 'sequelize';
import { Alert, AlertEvent } from '@/models';
import { recordAudit } from '@/lib/audit';

/** What differs between kinds of alert when one opens: its own fields, the timeline's first words, the audit details. */
export interface AlertOpening {
  fields: Omit<CreationAttributes<Alert>, 'state' | 'assigneeId' | 'dismissReason' | 'closedAt'>;
  /** the timeline's opening entry, in words */
  detail: string;
  /** what the audit log keeps beside the alert id */
  audit: Record<string, unknown>;
}

/**
 * Opens an alert as every kind opens (rule met, abrupt shift, data late): state new, nobody assigned, an "open"
 * entry on its timeline by the system and an `alert.open` audit entry, all in the caller's transaction. Mail and
 * webhooks stay with the caller, since each kind words them differently.
 */
export async function createAlert({ fields, detail, audit }: AlertOpening, transaction: Transaction): Promise<Alert> {
  const alert = await Alert.create({ ...fields, state: 'new', assigneeId: null, dismissReason: null, closedAt: null }, { transaction });
  await AlertEvent.create({ alertId: alert.id, actorId: null, action: 'open', fromState: null, toState: 'new', reason: null, detail }, { transaction });
  await recordAudit({ actorId: null, action: 'alert.open', entity: 'alert', entityId: alert.id, details: audit }, transaction);
  return alert;
}
