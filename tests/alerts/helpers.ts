import { AnalysisSnapshot, Series, User, Watch, type AlertRule } from '@/models';
import { hashPassword } from '@/lib/auth/password';
import { createRule } from '@/lib/alerts/rules';
import type { RuleCreateInput } from '@/lib/schemas/rule';
import type { Actor } from '@/lib/auth/roles';

let counter = 0;

export async function makeUser(role: Actor['role'], name = `${role} ${++counter}`): Promise<Actor> {
  const user = await User.create({
    email: `${role}${++counter}@example.test`,
    name,
    role,
    passwordHash: await hashPassword('unit-test-password'),
    active: true,
  });
  return { id: user.id, email: user.email, name: user.name, role: user.role };
}

export async function makeSeries(slug = `series-${++counter}`): Promise<Series> {
  return Series.create({
    slug,
    name: `Series ${slug}`,
    csvMapping: { timeColumn: 0, valueColumn: 1, timeFormat: 'iso8601' },
    settings: { window: 0.5, detrend: 'gaussian', bandwidth: 0.1, surrogates: 100 },
    intervalMs: 86_400_000,
    dataChangedAt: null,
    retiredAt: null,
  });
}

export async function watch(user: Actor, series: Pick<Series, 'id'>, mode: 'immediate' | 'digest' | 'none'): Promise<void> {
  await Watch.create({ userId: user.id, seriesId: series.id, mode });
}

export async function makeRule(series: Series, lead: Actor, input: Partial<RuleCreateInput> = {}): Promise<AlertRule> {
  return createRule(series.id, { indicator: 'ac1', minTau: 0.3, maxSurrogateP: 0.05, ...input }, lead);
}

/**
 * A snapshot as the analysis job stores it, with hand-picked evidence for one indicator, so rule judgement is
 * tested on known numbers without running the engine. `nullSd` is the spread of the surrogate taus (default 0.05);
 * `direction` the direction the stored p is in (the indicator's own, default rising); `summary` adds or replaces
 * summary fields (e.g. shifts), `curves` stores curves (e.g. surrogate taus).
 */
export async function makeSnapshot(
  series: Series,
  ac1: {
    tau: number | null;
    p?: number | null;
    surrogateP?: number | null;
    latest?: number | null;
    count?: number;
    nullSd?: number | null;
    direction?: string;
    indicator?: string;
  },
  extra: { summary?: Record<string, unknown>; curves?: Record<string, unknown> | null; status?: 'ok' | 'error'; error?: string | null } = {},
) {
  const name = ac1.indicator ?? 'ac1';
  const direction = ac1.direction ?? 'rising';
  return AnalysisSnapshot.create({
    seriesId: series.id,
    settings: { window: 0.5, detrend: 'gaussian', bandwidth: 0.1, surrogates: ac1.count ?? 100 },
    summary:
      extra.status === 'error'
        ? {}
        : {
            n: 400,
            windowPoints: 200,
            bandwidthPoints: 40,
            interval: 86_400_000,
            kendall: { [name]: { tau: ac1.tau, p: ac1.p ?? 0.001, direction } },
            significance:
              ac1.surrogateP === undefined
                ? {}
                : {
                    [name]: {
                      p: ac1.surrogateP,
                      count: ac1.count ?? 100,
                      method: 'ar1',
                      direction,
                      nullSd: ac1.nullSd === undefined ? 0.05 : ac1.nullSd,
                      nullCount: ac1.count ?? 100,
                    },
                  },
            latest: { [name]: ac1.latest === undefined ? { time: 0, value: 0.8 } : ac1.latest === null ? null : { time: 0, value: ac1.latest } },
            shifts: [],
            ...extra.summary,
          },
    curves: extra.curves ?? null,
    status: extra.status ?? 'ok',
    error: extra.error ?? null,
    n: 400,
    dataFrom: Date.UTC(2020, 0, 1),
    dataTo: Date.UTC(2021, 1, 4),
    durationMs: 1,
  });
}
