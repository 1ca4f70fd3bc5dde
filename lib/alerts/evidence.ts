import { QueryTypes, type Transaction } from 'sequelize';
import { AlertRule, AnalysisSnapshot, Series, WITHOUT_CHARTS, db, type Alert } from '@/models';
import { jsonPath } from '@/lib/db/dialect';
import { latestRuleCalibration, type RuleCalibration } from '@/lib/backtest/jobs';
import type { AlertEvidence } from '@/lib/mail/templates';
import { presentRule } from './rules';
import { orientedTau, trendDirectionOf, type TrendDirection } from '@/lib/engine/direction';
import { surrogatePValue } from '@/lib/engine/surrogates';

/** The parts of a stored snapshot summary that rules and messages read (see lib/analysis/snapshot.ts). */
export interface StoredSummary {
  windowPoints?: number;
  bandwidthPoints?: number | null;
  /** sampling interval in the unit of the series' times */
  interval?: number;
  /** p is one-sided in `direction` (two-sided for 'two-sided'); descriptive only. Snapshots before directions: upwards. */
  kendall?: Record<string, { tau: number | null; p: number | null; direction?: TrendDirection } | undefined>;
  /** p in `direction`; nullSd = standard deviation of the finite surrogate taus (the null spread of tau). */
  significance?: Record<
    string,
    { p: number | null; count: number; method: string; direction?: TrendDirection; nullSd?: number | null; nullCount?: number } | undefined
  >;
  latest?: Record<string, { time: number; value: number } | null | undefined>;
  shifts?: { time: number; index: number; size?: number }[];
  stretch?: { from: number; to: number; startsAfter: string };
  quality?: { windowsBelowCoverage?: number; coverage?: number };
}

/**
 * The facts about one indicator in a snapshot, seen in `direction`: tau (raw) and its oriented value, the surrogate
 * p in that direction, the null spread, the latest value. The stored surrogate p is in the indicator's own
 * direction (summary.significance[ind].direction, upwards for snapshots from before directions); a rule looking
 * another way gets its p recomputed from the stored surrogate taus (`taus`, read from the snapshot's curves), or
 * none when they are not at hand. O(1), or O(N) for N surrogate taus.
 */
export function indicatorFacts(summary: StoredSummary, indicator: string, direction: TrendDirection = 'rising', taus?: number[] | null) {
  const kendall = summary.kendall?.[indicator];
  const significance = summary.significance?.[indicator];
  const tau = kendall?.tau ?? null;
  const storedDirection = significance?.direction ?? 'rising';
  let surrogateP = significance?.p ?? null;
  let surrogateCount = significance?.count ?? 0;
  if (significance && storedDirection !== direction) {
    const recomputed =
      tau !== null && taus
        ? surrogatePValue(
            orientedTau(tau, direction),
            Float64Array.from(taus, (t) => orientedTau(t ?? Number.NaN, direction)),
          )
        : null;
    surrogateP = recomputed?.p ?? null;
    surrogateCount = recomputed?.count ?? surrogateCount;
  }
  return {
    computed: kendall !== undefined,
    direction,
    tau,
    orientedTau: tau === null ? null : orientedTau(tau, direction),
    kendallP: kendall?.p ?? null,
    kendallDirection: kendall?.direction ?? 'rising',
    surrogateTested: significance !== undefined,
    /** the p in `direction` needs the surrogate taus, which were not at hand */
    needsTaus: significance !== undefined && storedDirection !== direction && !taus,
    surrogateP,
    surrogateCount,
    surrogateMethod: significance?.method ?? null,
    nullSd: significance?.nullSd ?? null,
    level: summary.latest?.[indicator]?.value ?? null,
  };
}

/**
 * Everything an alert message states, from the series, the rule (null for an abrupt-shift alert), the snapshot that
 * carries the evidence and the rule's latest calibration. `taus` as for indicatorFacts.
 */
export function evidenceFrom(
  alert: Pick<Alert, 'id' | 'severity' | 'kind' | 'shiftTime' | 'shiftSize'> & Partial<Pick<Alert, 'dataLastAt' | 'dataBackAt'>>,
  series: Series,
  rule: AlertRule | null,
  snapshot: AnalysisSnapshot,
  calibration: RuleCalibration | null,
  taus: number[] | null = null,
): AlertEvidence {
  const summary = (snapshot.summary ?? {}) as StoredSummary;
  const settings = snapshot.settings as { window?: number | string; detrend?: string; bandwidth?: number | string };
  const direction = rule ? trendDirectionOf(rule.direction) : 'rising';
  const facts = indicatorFacts(summary, rule?.indicator ?? '', direction, taus);
  return {
    alertId: alert.id,
    kind: alert.kind ?? 'slowing-down',
    severity: alert.severity,
    series: { name: series.name, slug: series.slug, site: series.site, timeZone: series.timeZone },
    indicator: rule?.indicator ?? null,
    direction: rule?.direction ?? 'rising',
    tau: facts.tau,
    kendallP: facts.kendallP,
    kendallDirection: facts.kendallDirection,
    surrogateP: facts.surrogateP,
    surrogateCount: facts.surrogateCount,
    surrogateMethod: facts.surrogateMethod,
    latestValue: facts.level,
    windowFraction: settings.window ?? 0,
    windowPoints: summary.windowPoints ?? null,
    detrend: settings.detrend ?? 'none',
    bandwidth: settings.bandwidth ?? 0,
    bandwidthPoints: summary.bandwidthPoints ?? null,
    dataFrom: snapshot.dataFrom === null ? null : Number(snapshot.dataFrom),
    dataTo: snapshot.dataTo === null ? null : Number(snapshot.dataTo),
    n: snapshot.n,
    rule: rule ? presentRule(rule) : null,
    calibration,
    shift: alert.kind === 'abrupt-shift' && alert.shiftTime !== null ? { time: Number(alert.shiftTime), size: alert.shiftSize ?? null } : null,
    silence: alert.kind === 'data-late' && alert.dataLastAt != null ? { lastDataAt: alert.dataLastAt, backAt: alert.dataBackAt ?? null } : null,
  };
}

/** Loads what `evidenceFrom` needs for an existing alert, using its latest snapshot. */
export async function alertEvidence(alert: Alert, transaction?: Transaction): Promise<AlertEvidence> {
  const [series, rule, snapshot, calibrations] = await Promise.all([
    Series.findByPk(alert.seriesId, { transaction }),
    alert.ruleId === null ? null : AlertRule.findByPk(alert.ruleId, { transaction }),
    AnalysisSnapshot.findByPk(alert.latestSnapshotId, { transaction, attributes: WITHOUT_CHARTS }),
    alert.ruleId === null ? new Map<number, RuleCalibration>() : latestRuleCalibration([alert.ruleId]),
  ]);
  if (!series || (alert.ruleId !== null && !rule) || !snapshot) throw new Error(`alert ${alert.id} lost its series, rule or snapshot`);
  const taus =
    rule && indicatorFacts((snapshot.summary ?? {}) as StoredSummary, rule.indicator, trendDirectionOf(rule.direction)).needsTaus
      ? await snapshotTaus(snapshot.id, rule.indicator, transaction)
      : null;
  return evidenceFrom(alert, series, rule, snapshot, alert.ruleId === null ? null : (calibrations.get(alert.ruleId) ?? null), taus);
}

/** Surrogate taus of one indicator kept in a snapshot's curves, read inside the database (no parse of the whole curves); null when pruned. */
export async function snapshotTaus(snapshotId: number, indicator: string, transaction?: Transaction): Promise<number[] | null> {
  const sequelize = await db();
  // The indicator's name goes into the path literal; names are identifiers from the engine's list.
  if (!/^[A-Za-z0-9_-]+$/.test(indicator)) return null;
  const taus = jsonPath(sequelize, 'curves', `$.surrogateTaus.${indicator}`);
  const [row] = await sequelize.query<{ taus: string | null }>(`SELECT ${taus} AS taus FROM analysis_snapshots WHERE id = :id`, {
    replacements: { id: snapshotId },
    type: QueryTypes.SELECT,
    transaction,
  });
  return row?.taus ? (JSON.parse(row.taus) as number[]) : null;
}
