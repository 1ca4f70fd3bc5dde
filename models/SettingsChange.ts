import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** History of a series' analysis settings: who saved which settings, when, and why. */
export class SettingsChange extends Model<InferAttributes<SettingsChange>, InferCreationAttributes<SettingsChange>> {
  declare id: CreationOptional<number>;
  declare seriesId: number;
  declare settings: Record<string, unknown>;
  declare changedBy: number | null;
  /** the lead's reason for the change, in their words; null when none was given */
  declare reason: CreationOptional<string | null>;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    SettingsChange.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        seriesId: { type: DataTypes.INTEGER, allowNull: false },
        settings: { type: DataTypes.JSON, allowNull: false },
        changedBy: { type: DataTypes.INTEGER, allowNull: true },
        reason: { type: DataTypes.TEXT, allowNull: true },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'settings_changes', updatedAt: false },
    );
  }
}
