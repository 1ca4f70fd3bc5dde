import type { Transaction } from 'sequelize';
import { AlertRule, Site, SiteSnapshot, type Alert } from '@/models';
import type { AlertEvidence } from '@/lib/mail/templates';
import type { SiteAnalysisSummary } from '@/lib/sites/analysis-shape';
import { indicatorFacts, type StoredSummary } from './facts';
import { presentRule } from './rules';

/**
 * A site snapshot's summary in the shape rules read (StoredSummary): the same Kendall and surrogate facts, and the
 * newest evaluated window's value as the latest value at the snapshot's last grid instant. O(indicators).
 */
export function siteSummaryForRules(summary: SiteAnalysisSummary, dataTo: number | null): StoredSummary {
  return {
    windowPoints: summary.windowPoints,
    interval: summary.interval,
    kendall: summary.kendall,
    significance: summary.significance,
    latest: Object.fromEntries(
      Object.entries(summary.latest).map(([name, value]) => [name, value === null || dataTo === null ? null : { time: dataTo, value }]),
    ),
  };
}

/**
 * Everything an alert message states for a site alert: the site as what the alert is on, its member series, the
 * rule, and the site snapshot carrying the evidence (phase-coherent surrogates, each series detrended as its own
 * settings say). Site rules have no calibration (backtests replay one series). O(indicators).
 */
export function siteEvidenceFrom(alert: Pick<Alert, 'id' | 'severity'>, site: Site, rule: AlertRule, snapshot: SiteSnapshot): AlertEvidence {
  const summary = snapshot.status === 'ok' ? (snapshot.summary as SiteAnalysisSummary) : null;
  const facts = indicatorFacts(summary ? siteSummaryForRules(summary, snapshot.dataTo) : {}, rule.indicator, 'rising');
  const settings = snapshot.settings as { window?: number | string };
  return {
    alertId: alert.id,
    kind: 'site-slowing-down',
    severity: alert.severity,
    series: { name: `site ${site.name}`, slug: site.slug, site: site.name, timeZone: site.timeZone },
    siteMembers: snapshot.members.used.map((m) => m.name),
    indicator: rule.indicator,
    direction: rule.direction,
    tau: facts.tau,
    kendallP: facts.kendallP,
    kendallDirection: facts.kendallDirection,
    surrogateP: facts.surrogateP,
    surrogateCount: facts.surrogateCount,
    surrogateMethod: facts.surrogateMethod === 'phase' ? 'phase-coherent' : facts.surrogateMethod,
    latestValue: facts.level,
    windowFraction: settings.window ?? 0,
    windowPoints: summary?.windowPoints ?? null,
    detrend: 'each series as its own settings say',
    bandwidth: 0,
    bandwidthPoints: null,
    dataFrom: snapshot.dataFrom,
    dataTo: snapshot.dataTo,
    n: snapshot.n,
    rule: presentRule(rule),
    calibration: null,
    shift: null,
    silence: null,
  };
}

/** Loads what `siteEvidenceFrom` needs for an existing site alert, using its latest site snapshot. */
export async function siteAlertEvidence(alert: Alert, transaction?: Transaction): Promise<AlertEvidence> {
  // One after another: inside a transaction they share one connection, which takes one statement at a time.
  const site = await Site.findByPk(alert.siteId ?? undefined, { transaction });
  const rule = await AlertRule.findByPk(alert.ruleId ?? undefined, { transaction });
  const snapshot = await SiteSnapshot.findByPk(alert.latestSnapshotId, { transaction, attributes: { exclude: ['curves'] } });
  if (!site || !rule || !snapshot) throw new Error(`site alert ${alert.id} lost its site, rule or site snapshot`);
  return siteEvidenceFrom(alert, site, rule, snapshot);
}
