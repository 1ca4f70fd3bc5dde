import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { Severity } from './AlertRule';

export const ALERT_STATES = ['new', 'acknowledged', 'escalated', 'confirmed', 'dismissed'] as const;
export type AlertState = (typeof ALERT_STATES)[number];
export const ALERT_KINDS = ['slowing-down', 'abrupt-shift', 'data-late', 'site-slowing-down'] as const;
export type AlertKind = (typeof ALERT_KINDS)[number];
export const OPEN_ALERT_STATES: readonly AlertState[] = ['new', 'acknowledged', 'escalated'];

export class Alert extends Model<InferAttributes<Alert>, InferCreationAttributes<Alert>> {
  declare id: CreationOptional<number>;
  /** The series the alert is on; null for a 'site-slowing-down' alert, which is on a site (siteId). */
  declare seriesId: number | null;
  /** The site of a 'site-slowing-down' alert (a rule on site-level indicators, migration 0024); null otherwise. */
  declare siteId: CreationOptional<number | null>;
  /**
   * 'slowing-down' alerts come from a rule; 'abrupt-shift' alerts from the change-point detection (no rule);
   * 'data-late' alerts from the freshness pass when a series falls silent (no rule; lib/alerts/lateness.ts);
   * 'site-slowing-down' alerts from a rule on a site's site-level indicators (lib/alerts/site-rules.ts), whose
   * snapshot ids name site snapshots.
   */
  declare kind: CreationOptional<AlertKind>;
  declare ruleId: number | null;
  /** The abrupt shift's instant (first grid instant of the new level, epoch ms as series times) and level change. */
  declare shiftTime: CreationOptional<number | null>;
  declare shiftSize: CreationOptional<number | null>;
  /** For a data-late alert: the last observation before the silence and the first after it (null while silent). */
  declare dataLastAt: CreationOptional<number | null>;
  declare dataBackAt: CreationOptional<number | null>;
  declare state: AlertState;
  declare severity: Severity;
  declare assigneeId: number | null;
  declare firstSnapshotId: number;
  declare latestSnapshotId: number;
  declare evaluationCount: CreationOptional<number>;
  /**
   * Strongest evidence seen while open, as tau seen in the rule's direction (orientedTau): what a later alert must
   * clearly beat within a quiet period. Null for abrupt-shift alerts.
   */
  declare peakTau: number | null;
  declare dismissReason: string | null;
  declare closedAt: Date | null;
  /** Bumped on every triage action; an action names the version it saw, so a stale one loses with 409. */
  declare version: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Alert.init(
      {
        id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
        seriesId: { type: DataTypes.INTEGER, allowNull: true },
        siteId: { type: DataTypes.INTEGER, allowNull: true },
        kind: { type: DataTypes.STRING, allowNull: false, defaultValue: 'slowing-down', validate: { isIn: [[...ALERT_KINDS]] } },
        ruleId: { type: DataTypes.INTEGER, allowNull: true },
        shiftTime: {
          type: DataTypes.BIGINT,
          allowNull: true,
          get() {
            const v = this.getDataValue('shiftTime');
            return v === null || v === undefined ? null : Number(v);
          },
        },
        shiftSize: { type: DataTypes.DOUBLE, allowNull: true },
        dataLastAt: {
          type: DataTypes.BIGINT,
          allowNull: true,
          get() {
            const v = this.getDataValue('dataLastAt');
            return v === null || v === undefined ? null : Number(v);
          },
        },
        dataBackAt: {
          type: DataTypes.BIGINT,
          allowNull: true,
          get() {
            const v = this.getDataValue('dataBackAt');
            return v === null || v === undefined ? null : Number(v);
          },
        },
        state: { type: DataTypes.STRING, allowNull: false, validate: { isIn: [[...ALERT_STATES]] } },
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
