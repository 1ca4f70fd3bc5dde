import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { WebhookEvent } from '@/lib/webhooks/events';

/** A receiver an admin registered for chosen events (migration 0017). */
export class WebhookEndpoint extends Model<InferAttributes<WebhookEndpoint>, InferCreationAttributes<WebhookEndpoint>> {
  declare id: CreationOptional<number>;
  declare url: string;
  declare events: WebhookEvent[];
  /**
   * Kept as it is, not hashed: every delivery is signed with HMAC-SHA256 keyed by this very secret, and a hash
   * cannot sign. Shown to the admin once, at registration; never listed again. Protect the database (and its
   * backups) as the receivers' credential.
   */
  declare secret: string;
  declare description: CreationOptional<string>;
  /** A paused endpoint keeps its deliveries waiting; they go out once it is resumed. */
  declare active: CreationOptional<boolean>;
  declare createdBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    WebhookEndpoint.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        url: { type: DataTypes.STRING(2000), allowNull: false },
        events: {
          type: DataTypes.TEXT,
          allowNull: false,
          get() {
            return JSON.parse(this.getDataValue('events') as unknown as string) as WebhookEvent[];
          },
          set(value: WebhookEvent[]) {
            this.setDataValue('events', JSON.stringify(value) as unknown as WebhookEvent[]);
          },
        },
        secret: { type: DataTypes.STRING, allowNull: false },
        description: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
        active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
        createdBy: { type: DataTypes.INTEGER, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'webhook_endpoints' },
    );
  }
}
