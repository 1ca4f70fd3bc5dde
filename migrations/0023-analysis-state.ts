import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * What an incremental analysis continues from (lib/engine/update.ts, `AnalysisState`): one row per series, the state
 * its latest full or incremental analysis left, packed into one binary value (lib/analysis/state.ts), with the
 * snapshot it belongs to. Dropping the table only makes the next analysis of each series a full one.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.createTable('analysis_states', {
    series_id: { type: DataTypes.INTEGER, primaryKey: true, references: { model: 'series', key: 'id' }, onDelete: 'CASCADE' },
    snapshot_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'analysis_snapshots', key: 'id' }, onDelete: 'CASCADE' },
    state: { type: DataTypes.BLOB, allowNull: false },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.dropTable('analysis_states');
}
