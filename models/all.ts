/**
 * Every model class of the data model, one line each: models/index.ts binds all of them to the database and
 * re-exports them, so a new model is added here and nowhere else (besides its associations).
 */
export { User } from './User';
export { Series } from './Series';
export { Site } from './Site';
export { Observation } from './Observation';
export { IngestRun } from './IngestRun';
export { AnalysisSnapshot } from './AnalysisSnapshot';
export { AlertRule } from './AlertRule';
export { RuleEvaluation } from './RuleEvaluation';
export { Alert } from './Alert';
export { AlertEvent } from './AlertEvent';
export { Note, NoteRevision } from './Note';
export { IngestToken } from './IngestToken';
export { MailMessage } from './MailMessage';
export { AuditEntry } from './AuditEntry';
export { Watch } from './Watch';
export { Lease } from './Lease';
export { SettingsChange } from './SettingsChange';
export { SignInThrottle } from './SignInThrottle';
export { UserToken } from './UserToken';
export { Mark } from './Mark';
export { BacktestJob } from './BacktestJob';
export { AppState } from './AppState';
export { ApiToken } from './ApiToken';
export { UserPreference } from './UserPreference';
export { WebhookEndpoint } from './WebhookEndpoint';
export { WebhookAttempt, WebhookDelivery } from './WebhookDelivery';
export { ReportSchedule } from './ReportSchedule';
export { Feed } from './Feed';
export { SeriesAnalysisState } from './SeriesAnalysisState';
export { Reanalysis } from './Reanalysis';
export { SiteSnapshot } from './SiteSnapshot';
export { SiteRuleEvaluation } from './SiteRuleEvaluation';
