import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Personal API tokens: a user's credential for scripts that read (and, with a role that allows it, write) through
 * the API with `Authorization: Bearer …`. Only the SHA-256 of the secret is stored. `role` is the role chosen at
 * creation; a request acts with the lower of it and the owner's role at that moment.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.createTable('api_tokens', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    user_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    name: { type: DataTypes.STRING, allowNull: false },
    token_hash: { type: DataTypes.STRING, allowNull: false, unique: true },
    role: { type: DataTypes.STRING, allowNull: false },
    last_used_at: { type: DataTypes.DATE, allowNull: true },
    revoked_at: { type: DataTypes.DATE, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('api_tokens', ['user_id']);
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.dropTable('api_tokens');
}
