import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export const REPORT_CADENCES = ['monthly', 'quarterly'] as const;
export type ReportCadence = (typeof REPORT_CADENCES)[number];

/** A lead's standing order: the period report of the network or one site, mailed after each month or quarter. */
export class ReportSchedule extends Model<InferAttributes<ReportSchedule>, InferCreationAttributes<ReportSchedule>> {
  declare id: CreationOptional<number>;
  declare name: string;
  /** '' = the whole network */
  declare site: CreationOptional<string>;
  declare cadence: ReportCadence;
  /** Addresses (with or without an account); an unsubscribe removes one. */
  declare recipients: string[];
  declare active: CreationOptional<boolean>;
  declare createdBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    ReportSchedule.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        name: { type: DataTypes.STRING, allowNull: false },
        site: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
        cadence: { type: DataTypes.STRING, allowNull: false, validate: { isIn: [[...REPORT_CADENCES]] } },
        recipients: { type: DataTypes.JSON, allowNull: false },
        active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
        createdBy: { type: DataTypes.INTEGER, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'report_schedules' },
    );
  }
}
