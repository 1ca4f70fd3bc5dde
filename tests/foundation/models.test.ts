import { UniqueConstraintError, ValidationError } from 'sequelize';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { useTempDataDir } from '../support/temp-db';

useTempDataDir();
const { migrateUp } = await import('@/migrations');
const { db, closeDatabase, Observation, Series, User, Alert, AlertRule, AnalysisSnapshot } = await import('@/models');
const { createSeries } = await import('@/lib/series/registry');

describe('model constraints', () => {
  let seriesId: number;
  beforeAll(async () => {
    await migrateUp();
    await db();
    seriesId = (await createSeries({ slug: 'constraint-check', name: 'Constraint check' }, null)).id;
  });
  afterAll(async () => {
    await closeDatabase();
  });

  test('a second observation at the same instant of a series is refused', async () => {
    await Observation.create({ seriesId, t: 1_700_000_000_000, value: 1 });
    await expect(Observation.create({ seriesId, t: 1_700_000_000_000, value: 2 })).rejects.toBeInstanceOf(UniqueConstraintError);
    expect(await Observation.count({ where: { seriesId } })).toBe(1);
  });

  test('role must be one of viewer, analyst, lead, admin', async () => {
    await expect(User.create({ email: 'x@example.org', name: 'X', passwordHash: null, role: 'superuser' as never })).rejects.toBeInstanceOf(ValidationError);
    const user = await User.create({ email: 'y@example.org', name: 'Y', passwordHash: null, role: 'analyst' });
    expect(user.active).toBe(true);
  });

  test('e-mail addresses are unique', async () => {
    await User.create({ email: 'dup@example.org', name: 'A', passwordHash: null, role: 'viewer' });
    await expect(User.create({ email: 'dup@example.org', name: 'B', passwordHash: null, role: 'viewer' })).rejects.toBeInstanceOf(UniqueConstraintError);
  });

  test('a new series carries defaulted mapping and engine settings', async () => {
    const series = await Series.findByPk(seriesId);
    expect(series!.csvMapping).toEqual({ timeColumn: 0, valueColumn: 1, timeFormat: 'iso8601' });
    expect((series!.settings as { detrend: string }).detrend).toBe('local-linear');
  });

  test('at most one open alert per series and rule', async () => {
    const rule = await AlertRule.create({
      seriesId,
      indicator: 'ac1',
      minTau: 0.3,
      maxSurrogateP: 0.05,
      maxKendallP: null,
      levelThreshold: null,
      severity: 'warning',
      fdrLevel: null,
      createdBy: null,
    });
    const snapshot = await AnalysisSnapshot.create({
      seriesId,
      settings: {},
      summary: {},
      curves: null,
      error: null,
      dataFrom: null,
      dataTo: null,
      durationMs: null,
    });
    const fields = {
      seriesId,
      ruleId: rule.id,
      severity: 'warning' as const,
      assigneeId: null,
      firstSnapshotId: snapshot.id,
      latestSnapshotId: snapshot.id,
      peakTau: 0.5,
      dismissReason: null,
      closedAt: null,
    };
    await Alert.create({ ...fields, state: 'new' });
    await expect(Alert.create({ ...fields, state: 'acknowledged' })).rejects.toBeInstanceOf(UniqueConstraintError);
    await Alert.create({ ...fields, state: 'dismissed' }); // closed alerts do not count
  });
});
