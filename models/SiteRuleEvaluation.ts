import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import { judgementColumns } from './RuleEvaluation';

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
        ...judgementColumns(),
        siteId: { type: DataTypes.INTEGER, allowNull: false },
        siteSnapshotId: { type: DataTypes.INTEGER, allowNull: false },
        direction: { type: DataTypes.STRING, allowNull: false },
      },
      { sequelize, tableName: 'site_rule_evaluations' },
    );
  }
}
