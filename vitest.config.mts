import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

const ROOT = path.dirname(fileURLToPath(import.meta.url));

/**
 * The test files that touch the database, run a second time on PostgreSQL (project `postgres`) when
 * BRINKWATCH_TEST_POSTGRES_URL names a server to create throwaway databases on (`.ci/run` starts one with
 * scripts/test-postgres.sh; `scripts/test-postgres.sh run npm test` does the same on a developer's machine). Each
 * file gets a database of its own there (tests/support/temp-db.ts). Unit tests without a database run once. Not
 * listed: tests/alerts/migration-0007.test.ts and tests/backtest/migration-0009.test.ts, which upgrade SQLite
 * databases of an old schema (PostgreSQL is supported from the current schema on; migrations.test.ts runs every
 * migration up, down and up on it), and tests/reliability/backup.test.ts (SQLite's VACUUM INTO; PostgreSQL is
 * backed up with pg_dump).
 */
const POSTGRES_FILES = [
  // Files that use the database without starting the product.
  'tests/alerts/analysis-job.test.ts',
  'tests/alerts/directions.test.ts',
  'tests/alerts/evaluate.test.ts',
  'tests/alerts/lateness.test.ts',
  'tests/alerts/portfolio.test.ts',
  'tests/alerts/shifts.test.ts',
  'tests/alerts/site-rules.test.ts',
  'tests/alerts/triage.test.ts',
  'tests/analysis/incremental-snapshot.test.ts',
  'tests/backtest/rule-calibration.test.ts',
  'tests/demo/feed.test.ts',
  'tests/demo/live-analysis.test.ts',
  'tests/demo/seed.test.ts',
  'tests/feeds/feed.test.ts',
  'tests/feeds/site-maintenance.test.ts',
  'tests/foundation/health.test.ts',
  'tests/foundation/leases.test.ts',
  'tests/foundation/migrations.test.ts',
  'tests/foundation/models.test.ts',
  'tests/foundation/read-cache.test.ts',
  'tests/foundation/throttle.test.ts',
  'tests/intake/crash.test.ts',
  'tests/intake/netcdf-intake.test.ts',
  'tests/intake/pipeline.test.ts',
  'tests/intake/quality.test.ts',
  'tests/intake/versions.test.ts',
  'tests/live/provenance.test.ts',
  'tests/live/reanalysis.test.ts',
  'tests/live/site-provenance.test.ts',
  'tests/live/snapshot.test.ts',
  'tests/mail/digest.test.ts',
  'tests/mail/outbox.test.ts',
  'tests/mail/users.test.ts',
  'tests/reliability/shared-analysis.test.ts',
  'tests/reports/change-reasons.test.ts',
  'tests/reports/period.test.ts',
  'tests/reports/schedules.test.ts',
  'tests/rules/draft-backtest.test.ts',
  'tests/rules/preferences.test.ts',
  'tests/rules/preview.test.ts',
  'tests/screens/reads.test.ts',
  'tests/sites/registry.test.ts',
  'tests/sites/site-analysis.test.ts',
  'tests/webhooks/delivery.test.ts',
  // Files that start the product (the same production build as the SQLite project: one per source digest).
  'tests/alerts/e2e.test.ts',
  'tests/backtest/api.test.ts',
  'tests/browser/data-versions.test.ts',
  'tests/browser/journey.test.ts',
  'tests/browser/live-demo.test.ts',
  'tests/browser/netcdf-upload.test.ts',
  'tests/browser/registration.test.ts',
  'tests/browser/reports.test.ts',
  'tests/browser/rules.test.ts',
  'tests/browser/screens.test.ts',
  'tests/browser/site-indicators.test.ts',
  'tests/browser/station-data.test.ts',
  'tests/demo/live-feed.test.ts',
  'tests/feeds/app.test.ts',
  'tests/foundation/server.test.ts',
  'tests/intake/app.test.ts',
  'tests/intake/netcdf-app.test.ts',
  'tests/reliability/accounts.test.ts',
  'tests/reliability/api-tokens.test.ts',
  'tests/reliability/concurrency.test.ts',
  'tests/reliability/crash.test.ts',
  'tests/reliability/headers.test.ts',
  'tests/reliability/hostile.test.ts',
  'tests/reliability/outage.test.ts',
  'tests/reliability/role-matrix.test.ts',
  'tests/rules/watchers.test.ts',
  'tests/sites/api.test.ts',
  'tests/webhooks/api.test.ts',
  'tests/webhooks/screen.test.ts',
];

const postgresUrl = process.env.BRINKWATCH_TEST_POSTGRES_URL;
if (!postgresUrl) {
  console.log('vitest: the PostgreSQL project is skipped: BRINKWATCH_TEST_POSTGRES_URL is not set (scripts/test-postgres.sh run npm test)');
}

export default defineConfig({
  resolve: {
    alias: {
      '@': ROOT,
      // `server-only` throws on import unless the bundler resolves the `react-server` condition, which Next does for
      // server code; vitest runs that same server code in plain Node, so the marker is an empty module here.
      'server-only': path.join(ROOT, 'node_modules/server-only/empty.js'),
    },
  },
  test: {
    pool: 'forks',
    maxWorkers: 2,
    testTimeout: 120_000,
    // The first integration file may build the production app (a few minutes on two cores).
    hookTimeout: 900_000,
    reporters: ['default'],
    projects: [
      { extends: true, test: { name: 'sqlite', include: ['tests/**/*.test.ts'] } },
      ...(postgresUrl ? [{ extends: true as const, test: { name: 'postgres', include: POSTGRES_FILES, env: { BRINKWATCH_TEST_DIALECT: 'postgres' } } }] : []),
    ],
  },
});
