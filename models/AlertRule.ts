import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

import { INDICATOR_DIRECTIONS, type RuleDirection } from '@/lib/engine/direction';
import type { IndicatorName } from '@/lib/engine/settings';

export type Severity = 'watch' | 'warning';
export const RULE_DIRECTIONS = ['rising', 'falling', 'either'] as const satisfies readonly RuleDirection[];

/** A rule's default direction: its indicator's own under slowing down ('either' for the two-sided ones). */
export function defaultRuleDirection(indicator: string): RuleDirection {
  const own = INDICATOR_DIRECTIONS[indicator as IndicatorName] ?? 'rising';
  return own === 'two-sided' ? 'either' : own;
}

/** When a series' evidence counts as an early warning. A rule with no series is a default copied to new series. */
export class AlertRule extends Model<InferAttributes<AlertRule>, InferCreationAttributes<AlertRule>> {
  declare id: CreationOptional<number>;
  declare seriesId: number | null;
  /** A rule on a site's site-level indicators (then seriesId is null); null for series rules and defaults. */
  declare siteId: CreationOptional<number | null>;
  declare indicator: string;
  /** Which way the indicator's trend must go: minTau applies to tau seen in this direction (lib/engine/direction). */
  declare direction: CreationOptional<RuleDirection>;
  declare minTau: number;
  declare maxSurrogateP: number | null;
  /** Always null since migration 0007: the Kendall p assumes independent values and is no longer a gate. */
  declare maxKendallP: CreationOptional<number | null>;
  declare levelThreshold: number | null;
  declare levelDirection: CreationOptional<'above' | 'below'>;
  declare persistence: CreationOptional<number>;
  declare severity: Severity;
  declare quietPeriodHours: CreationOptional<number>;
  /** When set, surrogate p-values of one cycle are judged together (Benjamini–Hochberg) at this false-discovery rate. */
  declare fdrLevel: number | null;
  declare active: CreationOptional<boolean>;
  declare createdBy: number | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    AlertRule.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        seriesId: { type: DataTypes.INTEGER, allowNull: true },
        siteId: { type: DataTypes.INTEGER, allowNull: true },
        indicator: { type: DataTypes.STRING, allowNull: false },
        direction: { type: DataTypes.STRING, allowNull: false, validate: { isIn: [[...RULE_DIRECTIONS]] } },
        minTau: { type: DataTypes.DOUBLE, allowNull: false },
        maxSurrogateP: { type: DataTypes.DOUBLE, allowNull: true },
        maxKendallP: { type: DataTypes.DOUBLE, allowNull: true },
        levelThreshold: { type: DataTypes.DOUBLE, allowNull: true },
        levelDirection: { type: DataTypes.STRING, allowNull: false, defaultValue: 'above' },
        persistence: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
        severity: { type: DataTypes.STRING, allowNull: false, validate: { isIn: [['watch', 'warning']] } },
        quietPeriodHours: { type: DataTypes.DOUBLE, allowNull: false, defaultValue: 0 },
        fdrLevel: { type: DataTypes.DOUBLE, allowNull: true },
        active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
        createdBy: { type: DataTypes.INTEGER, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      {
        sequelize,
        tableName: 'alert_rules',
        // Rows written without a direction (the demo seed, older callers) look the indicator's own way.
        hooks: {
          beforeValidate: (rule) => {
            rule.direction ??= defaultRuleDirection(rule.indicator);
          },
          beforeBulkCreate: (rules) => {
            for (const rule of rules) rule.direction ??= defaultRuleDirection(rule.indicator);
          },
        },
      },
    );
  }
}
