import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { Severity } from './AlertRule';

export const ALERT_STATES = ['new', 'acknowledged', 'escalated', 'confirmed', 'dismissed'] as const;
export type AlertState = (typeof ALERT_STATES)[number];
export const OPEN_ALERT_STATES: readonly AlertState[] = ['new', 'acknowledged', 'escalated'];

export class Alert extends Model<InferAttributes<Alert>, InferCreationAttributes<Alert>> {
  declare id: CreationOptional<number>;
  declare seriesId: number;
  declare ruleId: number;
  declare state: AlertState;
  declare severity: Severity;
  declare assigneeId: number | null;
  declare firstSnapshotId: number;
  declare latestSnapshotId: number;
  declare evaluationCount: CreationOptional<number>;
  /** Strongest evidence seen while open: what a later alert must clearly beat within a quiet period. */
  declare peakTau: number | null;
  declare dismissReason: string | null;
  declare closedAt: Date | null;
  /** Bumped on every transition; a transition names the version it saw, so a stale one loses with 409. */
  declare version: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Alert.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        seriesId: { type: DataTypes.INTEGER, allowNull: false },
        ruleId: { type: DataTypes.INTEGER, allowNull: false },
        state: { type: DataTypes.STRING, allowNull: false, validate: { isIn: [ALERT_STATES as unknown as string[]] } },
        severity: { type: DataTypes.STRING, allowNull: false },
        assigneeId: { type: DataTypes.INTEGER, allowNull: true },
        firstSnapshotId: { type: DataTypes.INTEGER, allowNull: false },
        latestSnapshotId: { type: DataTypes.INTEGER, allowNull: false },
        evaluationCount: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
        peakTau: { type: DataTypes.DOUBLE, allowNull: true },
        dismissReason: { type: DataTypes.STRING, allowNull: true },
        closedAt: { type: DataTypes.DATE, allowNull: true },
        version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'alerts' },
    );
  }
}
