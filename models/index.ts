import type { Sequelize, Transaction } from 'sequelize';
import { databaseReady, getSequelize, readTransaction as readInTransaction, writeTransaction as writeInTransaction } from './db';
import * as M from './all';

const initialised = new WeakSet<Sequelize>();

/** Every association of the data model, wired in this one place. */
function associate(): void {
  M.Site.hasMany(M.Series, { foreignKey: 'siteId', as: 'series' });
  M.Series.belongsTo(M.Site, { foreignKey: 'siteId', as: 'siteRecord' });
  M.Series.hasMany(M.Observation, { foreignKey: 'seriesId', as: 'observations' });
  M.Series.hasMany(M.IngestRun, { foreignKey: 'seriesId', as: 'ingestRuns' });
  M.IngestRun.belongsTo(M.Series, { foreignKey: 'seriesId', as: 'series' });
  M.Series.hasMany(M.AnalysisSnapshot, { foreignKey: 'seriesId', as: 'snapshots' });
  M.AnalysisSnapshot.belongsTo(M.Series, { foreignKey: 'seriesId', as: 'series' });
  M.Series.hasMany(M.AlertRule, { foreignKey: 'seriesId', as: 'rules' });
  M.AlertRule.belongsTo(M.Series, { foreignKey: 'seriesId', as: 'series' });
  M.AlertRule.hasMany(M.RuleEvaluation, { foreignKey: 'ruleId', as: 'evaluations' });
  M.RuleEvaluation.belongsTo(M.AlertRule, { foreignKey: 'ruleId', as: 'rule' });
  M.Series.hasMany(M.Alert, { foreignKey: 'seriesId', as: 'alerts' });
  M.Alert.belongsTo(M.Series, { foreignKey: 'seriesId', as: 'series' });
  M.Alert.belongsTo(M.AlertRule, { foreignKey: 'ruleId', as: 'rule' });
  M.Alert.belongsTo(M.Site, { foreignKey: 'siteId', as: 'site' });
  M.Alert.belongsTo(M.User, { foreignKey: 'assigneeId', as: 'assignee' });
  M.Alert.belongsTo(M.AnalysisSnapshot, { foreignKey: 'firstSnapshotId', as: 'firstSnapshot' });
  M.Alert.belongsTo(M.AnalysisSnapshot, { foreignKey: 'latestSnapshotId', as: 'latestSnapshot' });
  M.Alert.hasMany(M.AlertEvent, { foreignKey: 'alertId', as: 'events' });
  M.AlertEvent.belongsTo(M.User, { foreignKey: 'actorId', as: 'actor' });
  M.Alert.hasMany(M.Note, { foreignKey: 'alertId', as: 'notes' });
  M.Note.belongsTo(M.User, { foreignKey: 'authorId', as: 'author' });
  M.Note.hasMany(M.NoteRevision, { foreignKey: 'noteId', as: 'revisions' });
  M.Series.hasMany(M.IngestToken, { foreignKey: 'seriesId', as: 'tokens' });
  M.IngestToken.belongsTo(M.Series, { foreignKey: 'seriesId', as: 'series' });
  M.AuditEntry.belongsTo(M.User, { foreignKey: 'actorId', as: 'actor' });
  M.User.hasMany(M.Watch, { foreignKey: 'userId', as: 'watches' });
  M.Watch.belongsTo(M.User, { foreignKey: 'userId', as: 'user' });
  M.Watch.belongsTo(M.Series, { foreignKey: 'seriesId', as: 'series' });
  M.Series.hasMany(M.Watch, { foreignKey: 'seriesId', as: 'watches' });
  M.Series.hasMany(M.SettingsChange, { foreignKey: 'seriesId', as: 'settingsHistory' });
  M.SettingsChange.belongsTo(M.User, { foreignKey: 'changedBy', as: 'author' });
  M.UserToken.belongsTo(M.User, { foreignKey: 'userId', as: 'user' });
  M.ApiToken.belongsTo(M.User, { foreignKey: 'userId', as: 'owner' });
  M.Series.hasMany(M.Mark, { foreignKey: 'seriesId', as: 'marks' });
  M.BacktestJob.belongsTo(M.AlertRule, { foreignKey: 'ruleId', as: 'rule' });
  M.BacktestJob.belongsTo(M.Series, { foreignKey: 'seriesId', as: 'series' });
  M.UserPreference.belongsTo(M.User, { foreignKey: 'userId', as: 'user' });
  M.WebhookEndpoint.hasMany(M.WebhookDelivery, { foreignKey: 'endpointId', as: 'deliveries' });
  M.WebhookDelivery.belongsTo(M.WebhookEndpoint, { foreignKey: 'endpointId', as: 'endpoint' });
  M.WebhookDelivery.hasMany(M.WebhookAttempt, { foreignKey: 'deliveryId', as: 'attemptLog' });
}

const MODELS = Object.values(M);

/** Binds the models to this process's one Sequelize instance (idempotent) and returns it once it is ready. */
export async function db(): Promise<Sequelize> {
  const sequelize = getSequelize();
  if (!initialised.has(sequelize)) {
    for (const model of MODELS) model.initModel(sequelize);
    associate();
    initialised.add(sequelize);
  }
  return databaseReady();
}

export * from './all';
/**
 * `writeTransaction` of models/db.ts with the models bound first: a web worker's first request may be a write
 * (a password reset) before anything in that process has called db().
 */
export async function writeTransaction<T>(work: (transaction: Transaction) => Promise<T>): Promise<T> {
  await db();
  return writeInTransaction(work);
}

/** `readTransaction` of models/db.ts (one moment of the database) with the models bound first. */
export async function readTransaction<T>(work: (transaction: Transaction) => Promise<T>): Promise<T> {
  await db();
  return readInTransaction(work);
}

export { closeDatabase } from './db';
export { ROLES, roleAtLeast, type Role } from '@/lib/auth/roles';
export { ALERT_KINDS, ALERT_STATES, OPEN_ALERT_STATES, type AlertKind, type AlertState } from './Alert';
export { RULE_DIRECTIONS, defaultRuleDirection } from './AlertRule';
export { WITHOUT_CHARTS } from './AnalysisSnapshot';
