import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** One station file layout: its time column and format, which value column feeds which series, and their flag columns. */
export class Feed extends Model<InferAttributes<Feed>, InferCreationAttributes<Feed>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare name: string;
  declare timeColumn: string;
  declare timeFormat: string;
  /** file column → series slug */
  declare columns: Record<string, string>;
  /** value column → the file column holding its QARTOD flag */
  declare flagColumns: Record<string, string>;
  /** a column whose filled cells mark a maintenance visit or sensor event (the cell is the note); null: none */
  declare maintenanceColumn: CreationOptional<string | null>;
  declare createdBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Feed.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        slug: { type: DataTypes.STRING, allowNull: false, unique: true },
        name: { type: DataTypes.STRING, allowNull: false },
        timeColumn: { type: DataTypes.STRING, allowNull: false },
        timeFormat: { type: DataTypes.STRING, allowNull: false },
        columns: { type: DataTypes.JSON, allowNull: false },
        flagColumns: { type: DataTypes.JSON, allowNull: false },
        maintenanceColumn: { type: DataTypes.STRING, allowNull: true },
        createdBy: { type: DataTypes.INTEGER, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'feeds' },
    );
  }
}
