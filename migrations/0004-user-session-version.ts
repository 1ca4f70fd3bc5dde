import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * A counter carried in every session: changing a password raises it, so sessions opened with the old password end
 * at their next request.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.addColumn('users', 'session_version', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.removeColumn('users', 'session_version');
}
