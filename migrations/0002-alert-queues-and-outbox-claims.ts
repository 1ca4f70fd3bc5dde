import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Indexes the triage queues and mail fan-out need at tens of thousands of alerts, and the claim column that lets
 * two schedulers share the outbox without sending one message twice.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  // Queue lists filtered by series: equality on series_id and state, ordered by age.
  await q.addIndex('alerts', ['series_id', 'state', 'created_at'], { name: 'alerts_series_state_created' });
  // Who to mail when a series raises an alert.
  await q.addIndex('watches', ['series_id', 'mode'], { name: 'watches_series_mode' });
  await q.addIndex('notes', ['alert_id'], { name: 'notes_alert' });
  await q.addIndex('note_revisions', ['note_id'], { name: 'note_revisions_note' });
  await q.addIndex('rule_evaluations', ['alert_id'], { name: 'rule_evaluations_alert' });
  await q.addIndex('user_tokens', ['user_id', 'purpose'], { name: 'user_tokens_user_purpose' });
  await q.addColumn('mail_outbox', 'claimed_by', { type: DataTypes.STRING, allowNull: true });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.removeColumn('mail_outbox', 'claimed_by');
  for (const [table, name] of [
    ['user_tokens', 'user_tokens_user_purpose'],
    ['rule_evaluations', 'rule_evaluations_alert'],
    ['note_revisions', 'note_revisions_note'],
    ['notes', 'notes_alert'],
    ['watches', 'watches_series_mode'],
    ['alerts', 'alerts_series_state_created'],
  ]) {
    await q.removeIndex(table, name);
  }
}
