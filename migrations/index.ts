import { Umzug, SequelizeStorage } from 'umzug';
import type { QueryInterface } from 'sequelize';
import pg from 'pg';
import { db } from '@/models';
import { isPostgres } from '@/lib/db/dialect';
import { databaseLocation } from '@/lib/runtime/config';
import * as initial from './0001-initial';
import * as alertQueues from './0002-alert-queues-and-outbox-claims';
import * as alertAge from './0003-alert-age-index';
import * as sessionVersion from './0004-user-session-version';
import * as alertTauOrder from './0005-alert-tau-order';
import * as snapshotChartView from './0006-snapshot-chart-view';
import * as ruleDirection from './0007-rule-direction-and-alert-kinds';
import * as transitionKind from './0008-transition-kind';
import * as markNames from './0009-marks-and-triage-names';
import * as analysisProvenance from './0012-analysis-provenance';
import * as personalApiTokens from './0013-personal-api-tokens';
import * as userPreferences from './0014-user-preferences';
import * as sites from './0015-sites';
import * as webhooks from './0017-webhooks';
import * as periodReports from './0018-period-reports';
import * as stationData from './0019-station-data';
import * as changeReasons from './0020-change-reasons';
import * as dataVersions from './0021-data-versions';
import * as siteSnapshots from './0022-site-snapshots';
import * as analysisState from './0023-analysis-state';
import * as siteRules from './0024-site-rules';
import * as siteSnapshotProvenance from './0025-site-snapshot-provenance';

/**
 * The ordered list of schema changes. Listed explicitly (not globbed) so the same list works in the Next.js server
 * bundle, under tsx and in tests. Add a new file and append it here; never edit one that has shipped.
 */
const MIGRATIONS = [
  { name: '0001-initial', ...initial },
  { name: '0002-alert-queues-and-outbox-claims', ...alertQueues },
  { name: '0003-alert-age-index', ...alertAge },
  { name: '0004-user-session-version', ...sessionVersion },
  { name: '0005-alert-tau-order', ...alertTauOrder },
  { name: '0006-snapshot-chart-view', ...snapshotChartView },
  { name: '0007-rule-direction-and-alert-kinds', ...ruleDirection },
  { name: '0008-transition-kind', ...transitionKind },
  { name: '0009-marks-and-triage-names', ...markNames },
  { name: '0012-analysis-provenance', ...analysisProvenance },
  { name: '0013-personal-api-tokens', ...personalApiTokens },
  { name: '0014-user-preferences', ...userPreferences },
  { name: '0015-sites', ...sites },
  { name: '0017-webhooks', ...webhooks },
  { name: '0018-period-reports', ...periodReports },
  { name: '0019-station-data', ...stationData },
  { name: '0020-change-reasons', ...changeReasons },
  { name: '0021-data-versions', ...dataVersions },
  { name: '0022-site-snapshots', ...siteSnapshots },
  { name: '0023-analysis-state', ...analysisState },
  { name: '0024-site-rules', ...siteRules },
  { name: '0025-site-snapshot-provenance', ...siteSnapshotProvenance },
];

async function migrator(): Promise<Umzug<QueryInterface>> {
  const sequelize = await db();
  return new Umzug({
    migrations: MIGRATIONS.map(({ name, up, down }) => ({ name, up, down })),
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger: undefined,
  });
}

/**
 * Applies every pending migration (or those up to and including `to`, for tests of one migration); a no-op when
 * the schema is current, so it is safe at every start.
 */
export async function migrateUp(to?: string): Promise<string[]> {
  return oneMigratorAtATime(async () => (await (await migrator()).up(to ? { to } : undefined)).map((m) => m.name));
}

/** PostgreSQL's session advisory lock key that a process applying migrations holds. */
const MIGRATION_LOCK_KEY = 4_212_031_734;

/**
 * Every web node and scheduler applies pending migrations at start. On SQLite they share one machine and the write
 * lock; on PostgreSQL several may start at once on several machines, so each holds a session advisory lock (on a
 * connection of its own, since the pool's connections change hands) while it migrates, and the next finds nothing
 * left to do.
 */
async function oneMigratorAtATime<T>(work: () => Promise<T>): Promise<T> {
  const sequelize = await db();
  if (!isPostgres(sequelize)) return work();
  const client = new pg.Client(databaseLocation());
  await client.connect();
  try {
    await client.query(`SELECT pg_advisory_lock(${MIGRATION_LOCK_KEY})`);
    return await work();
  } finally {
    await client.end();
  }
}

/** Reverts migrations down to (and excluding) `to`, or all of them. */
export async function migrateDown(to: string | 0 = 0): Promise<string[]> {
  const reverted = await (await migrator()).down({ to });
  return reverted.map((m) => m.name);
}

export async function pendingMigrations(): Promise<string[]> {
  return (await (await migrator()).pending()).map((m) => m.name);
}
