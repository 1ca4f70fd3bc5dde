import type { QueryInterface } from 'sequelize';

/**
 * The queues' "strongest first" sort orders by (peak_tau IS NULL, peak_tau DESC, id DESC); an index on exactly those
 * terms lets a page be read in order instead of sorting every closed alert.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.sequelize.query('CREATE INDEX alerts_tau_order ON alerts ((peak_tau IS NULL), peak_tau DESC, id DESC)');
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.removeIndex('alerts', 'alerts_tau_order');
}
