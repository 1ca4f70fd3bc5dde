import type { Transaction } from 'sequelize';
import { AlertRule, AnalysisSnapshot, Series, WITHOUT_CHARTS, type Alert } from '@/models';
import type { AlertEvidence } from '@/lib/mail/templates';
import { presentRule } from './rules';

/** The parts of a stored snapshot summary that rules and messages read (see lib/analysis/snapshot.ts). */
export interface StoredSummary {
  windowPoints?: number;
  bandwidthPoints?: number | null;
  kendall?: Record<string, { tau: number | null; p: number | null } | undefined>;
  significance?: Record<string, { p: number | null; count: number; method: string } | undefined>;
  latest?: Record<string, { time: number; value: number } | null | undefined>;
}

/** The facts about one indicator in a snapshot: trend, significance, latest value. O(1). */
export function indicatorFacts(summary: StoredSummary, indicator: string) {
  const kendall = summary.kendall?.[indicator];
  const significance = summary.significance?.[indicator];
  return {
    computed: kendall !== undefined,
    tau: kendall?.tau ?? null,
    kendallP: kendall?.p ?? null,
    surrogateP: significance?.p ?? null,
    surrogateCount: significance?.count ?? 0,
    surrogateMethod: significance?.method ?? null,
    level: summary.latest?.[indicator]?.value ?? null,
  };
}

/** Everything an alert message states, from the series, the rule and the snapshot that carries the evidence. */
export function evidenceFrom(alert: Pick<Alert, 'id' | 'severity'>, series: Series, rule: AlertRule, snapshot: AnalysisSnapshot): AlertEvidence {
  const summary = snapshot.summary as StoredSummary;
  const settings = snapshot.settings as { window?: number; detrend?: string; bandwidth?: number };
  const facts = indicatorFacts(summary, rule.indicator);
  return {
    alertId: alert.id,
    severity: alert.severity,
    series: { name: series.name, slug: series.slug, site: series.site, timeZone: series.timeZone },
    indicator: rule.indicator,
    tau: facts.tau,
    kendallP: facts.kendallP,
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
    rule: presentRule(rule),
  };
}

/** Loads what `evidenceFrom` needs for an existing alert, using its latest snapshot. */
export async function alertEvidence(alert: Alert, transaction?: Transaction): Promise<AlertEvidence> {
  const [series, rule, snapshot] = await Promise.all([
    Series.findByPk(alert.seriesId, { transaction }),
    AlertRule.findByPk(alert.ruleId, { transaction }),
    AnalysisSnapshot.findByPk(alert.latestSnapshotId, { transaction, attributes: WITHOUT_CHARTS }),
  ]);
  if (!series || !rule || !snapshot) throw new Error(`alert ${alert.id} lost its series, rule or snapshot`);
  return evidenceFrom(alert, series, rule, snapshot);
}
