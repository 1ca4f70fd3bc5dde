import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/**
 * The columns every judgement row has, of a series rule (rule_evaluations) or a site rule (site_rule_evaluations):
 * the rule, its numbers, the verdict with its streak and outcome, and the alert it opened or extended. A fresh
 * object each call, since Model.init keeps what it is given.
 */
export function judgementColumns() {
  return {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    ruleId: { type: DataTypes.INTEGER, allowNull: false },
    tau: { type: DataTypes.DOUBLE, allowNull: true },
    surrogateP: { type: DataTypes.DOUBLE, allowNull: true },
    level: { type: DataTypes.DOUBLE, allowNull: true },
    passed: { type: DataTypes.BOOLEAN, allowNull: false },
    streak: { type: DataTypes.INTEGER, allowNull: false },
    alertId: { type: DataTypes.INTEGER, allowNull: true },
    outcome: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  };
}

/** Every judgement of a rule on a snapshot, kept as the evidence trail whether or not it fired. */
export class RuleEvaluation extends Model<InferAttributes<RuleEvaluation>, InferCreationAttributes<RuleEvaluation>> {
  declare id: CreationOptional<number>;
  declare ruleId: number;
  declare seriesId: number;
  declare snapshotId: number;
  /** The direction the rule looked in when judging (tau and surrogate p are in it); null only before migration 0007. */
  declare direction: CreationOptional<string | null>;
  declare tau: number | null;
  declare kendallP: number | null;
  declare surrogateP: number | null;
  declare qValue: number | null;
  declare level: number | null;
  declare passed: boolean;
  declare streak: number;
  declare alertId: number | null;
  declare outcome: CreationOptional<string>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    RuleEvaluation.init(
      {
        ...judgementColumns(),
        seriesId: { type: DataTypes.INTEGER, allowNull: false },
        snapshotId: { type: DataTypes.INTEGER, allowNull: false },
        direction: { type: DataTypes.STRING, allowNull: true },
        kendallP: { type: DataTypes.DOUBLE, allowNull: true },
        qValue: { type: DataTypes.DOUBLE, allowNull: true },
      },
      { sequelize, tableName: 'rule_evaluations' },
    );
  }
}
