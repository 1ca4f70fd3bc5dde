import { QueryTypes, type Transaction } from 'sequelize';
import { AlertRule, AnalysisSnapshot, Series, WITHOUT_CHARTS, db, type Alert } from '@/models';
import { jsonPath } from '@/lib/db/dialect';
import { latestRuleCalibration, type RuleCalibration } from '@/lib/backtest/jobs';
import type { AlertEvidence } from '@/lib/mail/templates';
import { presentRule } from './rules';
import { siteAlertEvidence } from './site-evidence';
import { trendDirectionOf } from '@/lib/engine/direction';
import { indicatorFacts, type StoredSummary } from './facts';

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

/** Loads what `evidenceFrom` needs for an existing alert, using its latest snapshot (a site alert's: siteAlertEvidence). */
export async function alertEvidence(alert: Alert, transaction?: Transaction): Promise<AlertEvidence> {
  if (alert.seriesId === null) return siteAlertEvidence(alert, transaction);
  // One after another: inside a transaction they share one connection, which takes one statement at a time.
  const series = await Series.findByPk(alert.seriesId, { transaction });
  const rule = alert.ruleId === null ? null : await AlertRule.findByPk(alert.ruleId, { transaction });
  const snapshot = await AnalysisSnapshot.findByPk(alert.latestSnapshotId, { transaction, attributes: WITHOUT_CHARTS });
  const calibrations = alert.ruleId === null ? new Map<number, RuleCalibration>() : await latestRuleCalibration([alert.ruleId]);
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
