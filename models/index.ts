import type { Sequelize, Transaction } from 'sequelize';
import { databaseReady, getSequelize, readTransaction as readInTransaction, writeTransaction as writeInTransaction } from './db';
import { User } from './User';
import { Series } from './Series';
import { Site } from './Site';
import { Observation } from './Observation';
import { IngestRun } from './IngestRun';
import { AnalysisSnapshot } from './AnalysisSnapshot';
import { AlertRule } from './AlertRule';
import { RuleEvaluation } from './RuleEvaluation';
import { Alert } from './Alert';
import { AlertEvent } from './AlertEvent';
import { Note, NoteRevision } from './Note';
import { IngestToken } from './IngestToken';
import { MailMessage } from './MailMessage';
import { AuditEntry } from './AuditEntry';
import { Watch } from './Watch';
import { Lease } from './Lease';
import { SettingsChange } from './SettingsChange';
import { SignInThrottle } from './SignInThrottle';
import { UserToken } from './UserToken';
import { Mark } from './Mark';
import { BacktestJob } from './BacktestJob';
import { AppState } from './AppState';
import { ApiToken } from './ApiToken';
import { UserPreference } from './UserPreference';
import { WebhookEndpoint } from './WebhookEndpoint';
import { WebhookAttempt, WebhookDelivery } from './WebhookDelivery';
import { ReportSchedule } from './ReportSchedule';
import { Feed } from './Feed';

const initialised = new WeakSet<Sequelize>();

/** Every association of the data model, wired in this one place. */
function associate(): void {
  Site.hasMany(Series, { foreignKey: 'siteId', as: 'series' });
  Series.belongsTo(Site, { foreignKey: 'siteId', as: 'siteRecord' });
  Series.hasMany(Observation, { foreignKey: 'seriesId', as: 'observations' });
  Series.hasMany(IngestRun, { foreignKey: 'seriesId', as: 'ingestRuns' });
  IngestRun.belongsTo(Series, { foreignKey: 'seriesId', as: 'series' });
  Series.hasMany(AnalysisSnapshot, { foreignKey: 'seriesId', as: 'snapshots' });
  AnalysisSnapshot.belongsTo(Series, { foreignKey: 'seriesId', as: 'series' });
  Series.hasMany(AlertRule, { foreignKey: 'seriesId', as: 'rules' });
  AlertRule.belongsTo(Series, { foreignKey: 'seriesId', as: 'series' });
  AlertRule.hasMany(RuleEvaluation, { foreignKey: 'ruleId', as: 'evaluations' });
  RuleEvaluation.belongsTo(AlertRule, { foreignKey: 'ruleId', as: 'rule' });
  Series.hasMany(Alert, { foreignKey: 'seriesId', as: 'alerts' });
  Alert.belongsTo(Series, { foreignKey: 'seriesId', as: 'series' });
  Alert.belongsTo(AlertRule, { foreignKey: 'ruleId', as: 'rule' });
  Alert.belongsTo(User, { foreignKey: 'assigneeId', as: 'assignee' });
  Alert.belongsTo(AnalysisSnapshot, { foreignKey: 'firstSnapshotId', as: 'firstSnapshot' });
  Alert.belongsTo(AnalysisSnapshot, { foreignKey: 'latestSnapshotId', as: 'latestSnapshot' });
  Alert.hasMany(AlertEvent, { foreignKey: 'alertId', as: 'events' });
  AlertEvent.belongsTo(User, { foreignKey: 'actorId', as: 'actor' });
  Alert.hasMany(Note, { foreignKey: 'alertId', as: 'notes' });
  Note.belongsTo(User, { foreignKey: 'authorId', as: 'author' });
  Note.hasMany(NoteRevision, { foreignKey: 'noteId', as: 'revisions' });
  Series.hasMany(IngestToken, { foreignKey: 'seriesId', as: 'tokens' });
  IngestToken.belongsTo(Series, { foreignKey: 'seriesId', as: 'series' });
  AuditEntry.belongsTo(User, { foreignKey: 'actorId', as: 'actor' });
  User.hasMany(Watch, { foreignKey: 'userId', as: 'watches' });
  Watch.belongsTo(User, { foreignKey: 'userId', as: 'user' });
  Watch.belongsTo(Series, { foreignKey: 'seriesId', as: 'series' });
  Series.hasMany(Watch, { foreignKey: 'seriesId', as: 'watches' });
  Series.hasMany(SettingsChange, { foreignKey: 'seriesId', as: 'settingsHistory' });
  SettingsChange.belongsTo(User, { foreignKey: 'changedBy', as: 'author' });
  UserToken.belongsTo(User, { foreignKey: 'userId', as: 'user' });
  ApiToken.belongsTo(User, { foreignKey: 'userId', as: 'owner' });
  Series.hasMany(Mark, { foreignKey: 'seriesId', as: 'marks' });
  BacktestJob.belongsTo(AlertRule, { foreignKey: 'ruleId', as: 'rule' });
  BacktestJob.belongsTo(Series, { foreignKey: 'seriesId', as: 'series' });
  UserPreference.belongsTo(User, { foreignKey: 'userId', as: 'user' });
  WebhookEndpoint.hasMany(WebhookDelivery, { foreignKey: 'endpointId', as: 'deliveries' });
  WebhookDelivery.belongsTo(WebhookEndpoint, { foreignKey: 'endpointId', as: 'endpoint' });
  WebhookDelivery.hasMany(WebhookAttempt, { foreignKey: 'deliveryId', as: 'attemptLog' });
}

const MODELS = [
  User,
  Series,
  Observation,
  IngestRun,
  AnalysisSnapshot,
  AlertRule,
  RuleEvaluation,
  Alert,
  AlertEvent,
  Note,
  NoteRevision,
  IngestToken,
  MailMessage,
  AuditEntry,
  Watch,
  Lease,
  SettingsChange,
  SignInThrottle,
  UserToken,
  Mark,
  BacktestJob,
  AppState,
  ApiToken,
  UserPreference,
  Site,
  WebhookEndpoint,
  WebhookDelivery,
  WebhookAttempt,
  ReportSchedule,
  Feed,
];

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

export {
  User,
  Series,
  Observation,
  IngestRun,
  AnalysisSnapshot,
  AlertRule,
  RuleEvaluation,
  Alert,
  AlertEvent,
  Note,
  NoteRevision,
  IngestToken,
  MailMessage,
  AuditEntry,
  Watch,
  Lease,
  SettingsChange,
  SignInThrottle,
  UserToken,
  Mark,
  BacktestJob,
  AppState,
  ApiToken,
  UserPreference,
  Site,
  WebhookEndpoint,
  WebhookDelivery,
  WebhookAttempt,
  ReportSchedule,
  Feed,
};
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
