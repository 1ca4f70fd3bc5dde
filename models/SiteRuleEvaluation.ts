import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** Every judgement of a site rule on a site snapshot, kept as the evidence trail whether or not it fired (migration 0024). */
export class SiteRuleEvaluation extends Model<InferAttributes<SiteRuleEvaluation>, InferCreationAttributes<SiteRuleEvaluation>> {
  declare id: CreationOptional<number>;
  declare ruleId: number;
  declare siteId: number;
  declare siteSnapshotId: number;
  /** the direction the rule looked in (tau and surrogate p are in it) */
  declare direction: string;
  declare tau: number | null;
  declare surrogateP: number | null;
  declare level: number | null;
  declare passed: boolean;
  declare streak: number;
  declare alertId: number | null;
  declare outcome: CreationOptional<string>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    SiteRuleEvaluation.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        ruleId: { type: DataTypes.INTEGER, allowNull: false },
        siteId: { type: DataTypes.INTEGER, allowNull: false },
        siteSnapshotId: { type: DataTypes.INTEGER, allowNull: false },
        direction: { type: DataTypes.STRING, allowNull: false },
        tau: { type: DataTypes.DOUBLE, allowNull: true },
        surrogateP: { type: DataTypes.DOUBLE, allowNull: true },
        level: { type: DataTypes.DOUBLE, allowNull: true },
        passed: { type: DataTypes.BOOLEAN, allowNull: false },
        streak: { type: DataTypes.INTEGER, allowNull: false },
        alertId: { type: DataTypes.INTEGER, allowNull: true },
        outcome: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'site_rule_evaluations' },
    );
  }
}
