import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Why a series' analysis settings were changed: `settings_changes.reason`, the lead's own words, shown in the
 * settings history and the period report beside who and when. NULL for changes saved before reasons were asked
 * for (and for API clients that send none). Rule changes keep their reason in the audit entry's details.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.addColumn('settings_changes', 'reason', { type: DataTypes.TEXT, allowNull: true });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  // A native DROP COLUMN: removeColumn rebuilds the table on SQLite, which would fire its foreign keys.
  await q.sequelize.query('ALTER TABLE settings_changes DROP COLUMN reason');
}
