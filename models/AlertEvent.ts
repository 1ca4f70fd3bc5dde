import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** One step of an alert's timeline: who did what, from which state to which, and why. */
export class AlertEvent extends Model<InferAttributes<AlertEvent>, InferCreationAttributes<AlertEvent>> {
  declare id: CreationOptional<number>;
  declare alertId: number;
  declare actorId: number | null;
  declare action: string;
  declare fromState: string | null;
  declare toState: string | null;
  declare reason: string | null;
  declare detail: string | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    AlertEvent.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        alertId: { type: DataTypes.INTEGER, allowNull: false },
        actorId: { type: DataTypes.INTEGER, allowNull: true },
        action: { type: DataTypes.STRING, allowNull: false },
        fromState: { type: DataTypes.STRING, allowNull: true },
        toState: { type: DataTypes.STRING, allowNull: true },
        reason: { type: DataTypes.STRING, allowNull: true },
        detail: { type: DataTypes.TEXT, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'alert_events' },
    );
  }
}
