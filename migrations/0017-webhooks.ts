import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Webhooks: endpoints an admin registers, the outbox of deliveries to them (one row per event and endpoint, its
 * idempotency key unique per endpoint, the raw JSON body kept as sent, a claim like the mail outbox's) and one
 * row per attempt, so the admin sees every try with its answer.
 */
export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.createTable('webhook_endpoints', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    url: { type: DataTypes.STRING(2000), allowNull: false },
    events: { type: DataTypes.TEXT, allowNull: false },
    secret: { type: DataTypes.STRING, allowNull: false },
    description: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
    active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    created_by: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.createTable('webhook_deliveries', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    endpoint_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'webhook_endpoints', key: 'id' }, onDelete: 'CASCADE' },
    event: { type: DataTypes.STRING, allowNull: false },
    idempotency_key: { type: DataTypes.STRING, allowNull: false },
    body: { type: DataTypes.TEXT, allowNull: false },
    status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'pending' },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    next_attempt_at: { type: DataTypes.DATE, allowNull: false },
    claimed_by: { type: DataTypes.STRING, allowNull: true },
    last_status: { type: DataTypes.INTEGER, allowNull: true },
    last_error: { type: DataTypes.TEXT, allowNull: true },
    delivered_at: { type: DataTypes.DATE, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('webhook_deliveries', ['endpoint_id', 'idempotency_key'], { unique: true, name: 'webhook_deliveries_endpoint_key' });
  // The sender's claim: due rows by status and time.
  await q.addIndex('webhook_deliveries', ['status', 'next_attempt_at'], { name: 'webhook_deliveries_due' });
  await q.createTable('webhook_attempts', {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    delivery_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'webhook_deliveries', key: 'id' }, onDelete: 'CASCADE' },
    attempted_at: { type: DataTypes.DATE, allowNull: false },
    duration_ms: { type: DataTypes.INTEGER, allowNull: false },
    status_code: { type: DataTypes.INTEGER, allowNull: true },
    error: { type: DataTypes.TEXT, allowNull: true },
  });
  await q.addIndex('webhook_attempts', ['delivery_id'], { name: 'webhook_attempts_delivery' });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.dropTable('webhook_attempts');
  await q.dropTable('webhook_deliveries');
  await q.dropTable('webhook_endpoints');
}
