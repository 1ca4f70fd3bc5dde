import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { WebhookDeliveryStatus } from '@/lib/schemas/webhook';

/** One event for one endpoint: the webhook outbox (migration 0017). Written in the transaction of its cause. */
export class WebhookDelivery extends Model<InferAttributes<WebhookDelivery>, InferCreationAttributes<WebhookDelivery>> {
  declare id: CreationOptional<number>;
  declare endpointId: number;
  declare event: string;
  /** The event's id, sent as `Idempotency-Key`; unique per endpoint, so one event is never queued twice for it. */
  declare idempotencyKey: string;
  /** The JSON exactly as signed and sent on every attempt. */
  declare body: string;
  declare status: CreationOptional<WebhookDeliveryStatus>;
  declare attempts: CreationOptional<number>;
  declare nextAttemptAt: Date;
  /** The sender run holding a 'sending' claim; a claim whose next_attempt_at has passed may be taken over. */
  declare claimedBy: CreationOptional<string | null>;
  declare lastStatus: CreationOptional<number | null>;
  declare lastError: CreationOptional<string | null>;
  declare deliveredAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    WebhookDelivery.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        endpointId: { type: DataTypes.INTEGER, allowNull: false },
        event: { type: DataTypes.STRING, allowNull: false },
        idempotencyKey: { type: DataTypes.STRING, allowNull: false },
        body: { type: DataTypes.TEXT, allowNull: false },
        status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'pending' },
        attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        nextAttemptAt: { type: DataTypes.DATE, allowNull: false },
        claimedBy: { type: DataTypes.STRING, allowNull: true },
        lastStatus: { type: DataTypes.INTEGER, allowNull: true },
        lastError: { type: DataTypes.TEXT, allowNull: true },
        deliveredAt: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'webhook_deliveries' },
    );
  }
}

/** One try to deliver: when, how long, the receiver's HTTP status or why there was none. */
export class WebhookAttempt extends Model<InferAttributes<WebhookAttempt>, InferCreationAttributes<WebhookAttempt>> {
  declare id: CreationOptional<number>;
  declare deliveryId: number;
  declare attemptedAt: Date;
  declare durationMs: number;
  declare statusCode: number | null;
  declare error: string | null;

  static initModel(sequelize: Sequelize): void {
    WebhookAttempt.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        deliveryId: { type: DataTypes.INTEGER, allowNull: false },
        attemptedAt: { type: DataTypes.DATE, allowNull: false },
        durationMs: { type: DataTypes.INTEGER, allowNull: false },
        statusCode: { type: DataTypes.INTEGER, allowNull: true },
        error: { type: DataTypes.TEXT, allowNull: true },
      },
      { sequelize, tableName: 'webhook_attempts', timestamps: false },
    );
  }
}
