import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** One user's preferences (a JSON document read through `preferencesSchema`); at most one row per user. */
export class UserPreference extends Model<InferAttributes<UserPreference>, InferCreationAttributes<UserPreference>> {
  declare id: CreationOptional<number>;
  declare userId: number;
  declare value: Record<string, unknown>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    UserPreference.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        userId: { type: DataTypes.INTEGER, allowNull: false, unique: true },
        value: { type: DataTypes.JSON, allowNull: false },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'user_preferences' },
    );
  }
}
