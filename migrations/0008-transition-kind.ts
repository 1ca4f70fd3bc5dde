import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Marks gain a kind: 'transition' (a known transition of the system: the ground truth of backtests) or
 * 'maintenance' (a sensor swap, recalibration or relocation: a break in the record that is no transition). The live
 * analysis judges only the stretch after the latest mark of either kind. Existing marks are transitions.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.addColumn('transitions', 'kind', { type: DataTypes.STRING, allowNull: false, defaultValue: 'transition' });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.removeColumn('transitions', 'kind');
}
