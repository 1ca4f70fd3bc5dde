import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export class AuditEntry extends Model<InferAttributes<AuditEntry>, InferCreationAttributes<AuditEntry>> {
  declare id: CreationOptional<number>;
  declare actorId: number | null;
  declare action: string;
  declare entity: string;
  declare entityId: string | null;
  declare details: CreationOptional<Record<string, unknown>>;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    AuditEntry.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        actorId: { type: DataTypes.INTEGER, allowNull: true },
        action: { type: DataTypes.STRING, allowNull: false },
        entity: { type: DataTypes.STRING, allowNull: false },
        entityId: { type: DataTypes.STRING, allowNull: true },
        details: { type: DataTypes.JSON, allowNull: false, defaultValue: {} },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'audit_log', updatedAt: false },
    );
  }
}
