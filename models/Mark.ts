import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

import { MARK_KINDS, type MarkKind } from '@/lib/marks/kinds';

/**
 * An instant a lead marked in a series' record: a marked tipping point (the ground truth for backtests) or a maintenance
 * break (sensor swap, recalibration). The live analysis judges only the stretch after the latest mark of either kind.
 */
export class Mark extends Model<InferAttributes<Mark>, InferCreationAttributes<Mark>> {
  declare id: CreationOptional<number>;
  declare seriesId: number;
  declare at: number;
  declare note: CreationOptional<string>;
  declare kind: CreationOptional<MarkKind>;
  declare createdBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Mark.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        seriesId: { type: DataTypes.INTEGER, allowNull: false },
        at: { type: DataTypes.BIGINT, allowNull: false },
        note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
        kind: { type: DataTypes.STRING, allowNull: false, defaultValue: 'tipping-point', validate: { isIn: [[...MARK_KINDS]] } },
        createdBy: { type: DataTypes.INTEGER, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'marks' },
    );
  }
}
