import type { QueryInterface } from 'sequelize';

/**
 * The "all alerts" view reads alerts in creation order across every state; a severity filter (with the queue
 * counts beside it) narrows by severity, then state, then age.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.addIndex('alerts', ['created_at'], { name: 'alerts_created' });
  await q.addIndex('alerts', ['severity', 'state', 'created_at'], { name: 'alerts_severity_state_created' });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.removeIndex('alerts', 'alerts_severity_state_created');
  await q.removeIndex('alerts', 'alerts_created');
}
