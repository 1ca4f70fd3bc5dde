import { DataTypes, type QueryInterface } from 'sequelize';

const id = { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true };
const stamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
};
const ref = (table: string, allowNull = false, onDelete: 'CASCADE' | 'SET NULL' = 'CASCADE') => ({
  type: DataTypes.INTEGER,
  allowNull,
  references: { model: table, key: 'id' },
  onDelete,
});

/** Order matters for foreign keys on the way up, and is reversed on the way down. */
const TABLES = [
  'users',
  'series',
  'observations',
  'ingest_tokens',
  'ingest_runs',
  'analysis_snapshots',
  'alert_rules',
  'alerts',
  'rule_evaluations',
  'alert_events',
  'notes',
  'note_revisions',
  'mail_outbox',
  'audit_log',
  'watches',
  'leases',
  'settings_changes',
  'sign_in_throttle',
  'user_tokens',
  'transitions',
  'backtest_jobs',
  'app_state',
];

export async function up({ context: q }: { context: QueryInterface }): Promise<void> {
  await q.createTable('users', {
    id,
    email: { type: DataTypes.STRING, allowNull: false, unique: true },
    name: { type: DataTypes.STRING, allowNull: false },
    password_hash: { type: DataTypes.STRING, allowNull: true },
    role: { type: DataTypes.STRING, allowNull: false },
    active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    ...stamps,
  });
  await q.createTable('series', {
    id,
    slug: { type: DataTypes.STRING, allowNull: false, unique: true },
    name: { type: DataTypes.STRING, allowNull: false },
    site: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
    unit: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
    description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    interval_ms: { type: DataTypes.BIGINT, allowNull: true },
    time_zone: { type: DataTypes.STRING, allowNull: false, defaultValue: 'UTC' },
    csv_mapping: { type: DataTypes.JSON, allowNull: false },
    settings: { type: DataTypes.JSON, allowNull: false },
    duplicate_policy: { type: DataTypes.STRING, allowNull: false, defaultValue: 'reject' },
    needs_analysis: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    data_changed_at: { type: DataTypes.DATE, allowNull: true },
    retired_at: { type: DataTypes.DATE, allowNull: true },
    ...stamps,
  });
  // The composite primary key is the uniqueness rule (one value per series and instant) and the range-read index.
  await q.createTable('observations', {
    series_id: { ...ref('series'), primaryKey: true },
    t: { type: DataTypes.BIGINT, allowNull: false, primaryKey: true },
    value: { type: DataTypes.DOUBLE, allowNull: false },
  });
  await q.createTable('ingest_tokens', {
    id,
    series_id: ref('series'),
    token_hash: { type: DataTypes.STRING, allowNull: false, unique: true },
    label: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
    created_by: ref('users', true, 'SET NULL'),
    last_used_at: { type: DataTypes.DATE, allowNull: true },
    revoked_at: { type: DataTypes.DATE, allowNull: true },
    ...stamps,
  });
  await q.createTable('ingest_runs', {
    id,
    series_id: ref('series', true),
    source: { type: DataTypes.STRING, allowNull: false },
    file_name: { type: DataTypes.STRING, allowNull: true },
    content_hash: { type: DataTypes.STRING, allowNull: true },
    status: { type: DataTypes.STRING, allowNull: false },
    rows_read: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    accepted: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    duplicates: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    replaced: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    rejected: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    report: { type: DataTypes.JSON, allowNull: false, defaultValue: '{}' },
    message: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    duration_ms: { type: DataTypes.INTEGER, allowNull: true },
    user_id: ref('users', true, 'SET NULL'),
    token_id: ref('ingest_tokens', true, 'SET NULL'),
    started_at: { type: DataTypes.DATE, allowNull: false },
    finished_at: { type: DataTypes.DATE, allowNull: true },
    ...stamps,
  });
  await q.addIndex('ingest_runs', ['series_id', 'content_hash']);
  await q.addIndex('ingest_runs', ['created_at']);
  await q.createTable('analysis_snapshots', {
    id,
    series_id: ref('series'),
    settings: { type: DataTypes.JSON, allowNull: false },
    summary: { type: DataTypes.JSON, allowNull: false },
    curves: { type: DataTypes.JSON, allowNull: true },
    status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'ok' },
    error: { type: DataTypes.TEXT, allowNull: true },
    n: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    data_from: { type: DataTypes.BIGINT, allowNull: true },
    data_to: { type: DataTypes.BIGINT, allowNull: true },
    duration_ms: { type: DataTypes.INTEGER, allowNull: true },
    ...stamps,
  });
  await q.addIndex('analysis_snapshots', ['series_id', 'id']);
  await q.createTable('alert_rules', {
    id,
    series_id: ref('series', true),
    indicator: { type: DataTypes.STRING, allowNull: false },
    min_tau: { type: DataTypes.DOUBLE, allowNull: false },
    max_surrogate_p: { type: DataTypes.DOUBLE, allowNull: true },
    max_kendall_p: { type: DataTypes.DOUBLE, allowNull: true },
    level_threshold: { type: DataTypes.DOUBLE, allowNull: true },
    level_direction: { type: DataTypes.STRING, allowNull: false, defaultValue: 'above' },
    persistence: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
    severity: { type: DataTypes.STRING, allowNull: false },
    quiet_period_hours: { type: DataTypes.DOUBLE, allowNull: false, defaultValue: 0 },
    fdr_level: { type: DataTypes.DOUBLE, allowNull: true },
    active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    created_by: ref('users', true, 'SET NULL'),
    ...stamps,
  });
  await q.createTable('alerts', {
    id,
    series_id: ref('series'),
    rule_id: ref('alert_rules'),
    state: { type: DataTypes.STRING, allowNull: false },
    severity: { type: DataTypes.STRING, allowNull: false },
    assignee_id: ref('users', true, 'SET NULL'),
    first_snapshot_id: { type: DataTypes.INTEGER, allowNull: false },
    latest_snapshot_id: { type: DataTypes.INTEGER, allowNull: false },
    evaluation_count: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
    peak_tau: { type: DataTypes.DOUBLE, allowNull: true },
    dismiss_reason: { type: DataTypes.STRING, allowNull: true },
    closed_at: { type: DataTypes.DATE, allowNull: true },
    version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
    ...stamps,
  });
  // At most one open alert per series and rule, enforced by the database itself.
  await q.addIndex('alerts', ['series_id', 'rule_id'], {
    unique: true,
    name: 'alerts_one_open_per_rule',
    where: { state: ['new', 'acknowledged', 'escalated'] },
  });
  await q.addIndex('alerts', ['state', 'created_at']);
  await q.addIndex('alerts', ['assignee_id', 'state']);
  await q.createTable('rule_evaluations', {
    id,
    rule_id: ref('alert_rules'),
    series_id: ref('series'),
    snapshot_id: ref('analysis_snapshots'),
    tau: { type: DataTypes.DOUBLE, allowNull: true },
    kendall_p: { type: DataTypes.DOUBLE, allowNull: true },
    surrogate_p: { type: DataTypes.DOUBLE, allowNull: true },
    q_value: { type: DataTypes.DOUBLE, allowNull: true },
    level: { type: DataTypes.DOUBLE, allowNull: true },
    passed: { type: DataTypes.BOOLEAN, allowNull: false },
    streak: { type: DataTypes.INTEGER, allowNull: false },
    alert_id: ref('alerts', true, 'SET NULL'),
    outcome: { type: DataTypes.STRING, allowNull: false, defaultValue: '' },
    ...stamps,
  });
  // A snapshot is judged once per rule, however many schedulers race for it.
  await q.addIndex('rule_evaluations', ['rule_id', 'snapshot_id'], { unique: true });
  await q.createTable('alert_events', {
    id,
    alert_id: ref('alerts'),
    actor_id: ref('users', true, 'SET NULL'),
    action: { type: DataTypes.STRING, allowNull: false },
    from_state: { type: DataTypes.STRING, allowNull: true },
    to_state: { type: DataTypes.STRING, allowNull: true },
    reason: { type: DataTypes.STRING, allowNull: true },
    detail: { type: DataTypes.TEXT, allowNull: true },
    ...stamps,
  });
  await q.addIndex('alert_events', ['alert_id']);
  await q.createTable('notes', {
    id,
    alert_id: ref('alerts'),
    author_id: ref('users'),
    body: { type: DataTypes.TEXT, allowNull: false },
    ...stamps,
  });
  await q.createTable('note_revisions', {
    id,
    note_id: ref('notes'),
    body: { type: DataTypes.TEXT, allowNull: false },
    edited_by: ref('users'),
    ...stamps,
  });
  await q.createTable('mail_outbox', {
    id,
    kind: { type: DataTypes.STRING, allowNull: false },
    dedupe_key: { type: DataTypes.STRING, allowNull: false, unique: true },
    to_address: { type: DataTypes.STRING, allowNull: false },
    subject: { type: DataTypes.STRING, allowNull: false },
    text_body: { type: DataTypes.TEXT, allowNull: false },
    html_body: { type: DataTypes.TEXT, allowNull: false },
    status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'pending' },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    next_attempt_at: { type: DataTypes.DATE, allowNull: false },
    last_error: { type: DataTypes.TEXT, allowNull: true },
    sent_at: { type: DataTypes.DATE, allowNull: true },
    message_id: { type: DataTypes.STRING, allowNull: true },
    ...stamps,
  });
  await q.addIndex('mail_outbox', ['status', 'next_attempt_at']);
  await q.createTable('audit_log', {
    id,
    actor_id: ref('users', true, 'SET NULL'),
    action: { type: DataTypes.STRING, allowNull: false },
    entity: { type: DataTypes.STRING, allowNull: false },
    entity_id: { type: DataTypes.STRING, allowNull: true },
    details: { type: DataTypes.JSON, allowNull: false, defaultValue: '{}' },
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('audit_log', ['created_at']);
  await q.createTable('watches', {
    id,
    user_id: ref('users'),
    series_id: ref('series'),
    mode: { type: DataTypes.STRING, allowNull: false },
    ...stamps,
  });
  await q.addIndex('watches', ['user_id', 'series_id'], { unique: true });
  await q.createTable('leases', {
    name: { type: DataTypes.STRING, primaryKey: true },
    holder: { type: DataTypes.STRING, allowNull: false },
    expires_at: { type: DataTypes.BIGINT, allowNull: false },
  });
  await q.createTable('settings_changes', {
    id,
    series_id: ref('series'),
    settings: { type: DataTypes.JSON, allowNull: false },
    changed_by: ref('users', true, 'SET NULL'),
    created_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.createTable('sign_in_throttle', {
    key: { type: DataTypes.STRING, primaryKey: true },
    failures: { type: DataTypes.INTEGER, allowNull: false },
    window_started_at: { type: DataTypes.BIGINT, allowNull: false },
    locked_until: { type: DataTypes.BIGINT, allowNull: true },
  });
  await q.createTable('user_tokens', {
    id,
    user_id: ref('users'),
    purpose: { type: DataTypes.STRING, allowNull: false },
    token_hash: { type: DataTypes.STRING, allowNull: false, unique: true },
    expires_at: { type: DataTypes.DATE, allowNull: false },
    used_at: { type: DataTypes.DATE, allowNull: true },
    ...stamps,
  });
  await q.createTable('transitions', {
    id,
    series_id: ref('series'),
    at: { type: DataTypes.BIGINT, allowNull: false },
    note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    created_by: ref('users', true, 'SET NULL'),
    ...stamps,
  });
  await q.createTable('backtest_jobs', {
    id,
    rule_id: ref('alert_rules'),
    series_id: ref('series'),
    kind: { type: DataTypes.STRING, allowNull: false, defaultValue: 'backtest' },
    status: { type: DataTypes.STRING, allowNull: false, defaultValue: 'queued' },
    progress: { type: DataTypes.DOUBLE, allowNull: false, defaultValue: 0 },
    params: { type: DataTypes.JSON, allowNull: false, defaultValue: '{}' },
    result: { type: DataTypes.JSON, allowNull: true },
    error: { type: DataTypes.TEXT, allowNull: true },
    cancel_requested: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    created_by: ref('users', true, 'SET NULL'),
    started_at: { type: DataTypes.DATE, allowNull: true },
    finished_at: { type: DataTypes.DATE, allowNull: true },
    ...stamps,
  });
  await q.createTable('app_state', {
    key: { type: DataTypes.STRING, primaryKey: true },
    value: { type: DataTypes.TEXT, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  });
}

export async function down({ context: q }: { context: QueryInterface }): Promise<void> {
  for (const table of [...TABLES].reverse()) await q.dropTable(table);
}
