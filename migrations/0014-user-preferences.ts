import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Per-user preferences kept on the server, so a reader's choices follow them to any browser: one row per user
 * with a JSON document validated by `preferencesSchema` (lib/schemas/account.ts); the first use is which charts
 * the series page shows and in what order. Deleted with the user.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.createTable('user_preferences', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    user_id: { type: DataTypes.INTEGER, allowNull: false, unique: true, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    value: { type: DataTypes.JSON, allowNull: false },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.dropTable('user_preferences');
}
