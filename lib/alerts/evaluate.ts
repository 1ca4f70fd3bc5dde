import { Op, type Transaction } from 'sequelize';
import { Alert, AlertEvent, AlertRule, RuleEvaluation, Series, writeTransaction, OPEN_ALERT_STATES, type AnalysisSnapshot } from '@/models';
import { recordAudit } from '@/lib/audit';
import { portfolioFdr } from './portfolio-fdr';
import { enqueueMail } from '@/lib/mail/outbox';
import { newAlertMail } from '@/lib/mail/templates';
import { watchersOf } from '@/lib/mail/watches';
import { evidenceFrom, indicatorFacts, type StoredSummary } from './evidence';

/** The thresholds of a rule that judgement reads (an AlertRule or its plain fields). */
export type RuleThresholds = Pick<AlertRule, 'indicator' | 'minTau' | 'maxSurrogateP' | 'maxKendallP' | 'levelThreshold' | 'levelDirection' | 'fdrLevel'>;

export interface Judgement {
  tau: number | null;
  kendallP: number | null;
  surrogateP: number | null;
  qValue: number | null;
  level: number | null;
  passed: boolean;
  /** Which tests failed, in words, for the evidence trail. */
  failed: string[];
}

/**
 * Judges one rule on one snapshot summary. Every configured test must pass: tau ≥ minTau; surrogate p ≤
 * maxSurrogateP; Kendall p ≤ maxKendallP; with fdrLevel, the Benjamini–Hochberg q-value ≤ fdrLevel; the
 * indicator's latest value above (≥) or below (≤) levelThreshold. A test whose number is missing (indicator not
 * computed, no surrogates run) fails: no evidence is not evidence. O(1).
 */
export function judgeRule(rule: RuleThresholds, summary: StoredSummary, qValue: number | null = null): Judgement {
  const facts = indicatorFacts(summary, rule.indicator);
  const failed: string[] = [];
  if (!facts.computed) failed.push(`${rule.indicator} is not among the computed indicators`);
  if (facts.tau === null || facts.tau < rule.minTau) failed.push(`tau below ${rule.minTau}`);
  if (rule.maxSurrogateP !== null && (facts.surrogateP === null || facts.surrogateP > rule.maxSurrogateP))
    failed.push(facts.surrogateP === null ? 'no surrogate test' : `surrogate p above ${rule.maxSurrogateP}`);
  if (rule.maxKendallP !== null && (facts.kendallP === null || facts.kendallP > rule.maxKendallP)) failed.push(`Kendall p above ${rule.maxKendallP}`);
  if (rule.fdrLevel !== null && (qValue === null || qValue > rule.fdrLevel))
    failed.push(qValue === null ? 'no surrogate test for the false-discovery check' : `q-value above ${rule.fdrLevel}`);
  if (rule.levelThreshold !== null) {
    const below = rule.levelDirection === 'below';
    if (facts.level === null || (below ? facts.level > rule.levelThreshold : facts.level < rule.levelThreshold))
      failed.push(`latest value not ${below ? 'at or below' : 'at or above'} ${rule.levelThreshold}`);
  }
  return { tau: facts.tau, kendallP: facts.kendallP, surrogateP: facts.surrogateP, qValue, level: facts.level, passed: failed.length === 0, failed };
}

/** A later alert within a quiet period must beat the decided one by this much tau… */
export const QUIET_TAU_MARGIN = 0.1;
/** …and, when both have a surrogate p, have at most this fraction of its surrogate p. */
export const QUIET_P_FACTOR = 0.5;

/**
 * Whether new evidence is clearly stronger than that of a dismissed (or confirmed) alert, so it may break the
 * rule's quiet period: tau ≥ the closed alert's peak tau + 0.1, AND, when the closed alert had a surrogate p,
 * the new surrogate p is at most half the smallest one it had (a new p that is missing does not count as
 * stronger). Our own convention: 0.1 in tau is about two standard errors of tau at a few hundred points
 * (var τ ≈ 2(2n+5)/(9n(n−1)), Kendall 1970, Rank Correlation Methods, ch. 4 — from memory).
 */
export function clearlyStronger(current: { tau: number | null; surrogateP: number | null }, closed: { peakTau: number | null; surrogateP: number | null }): boolean {
  if (current.tau === null) return false;
  if (closed.peakTau !== null && current.tau < closed.peakTau + QUIET_TAU_MARGIN) return false;
  if (closed.surrogateP !== null && (current.surrogateP === null || current.surrogateP > closed.surrogateP * QUIET_P_FACTOR)) return false;
  return true;
}

export type EvaluationOutcome = 'not-met' | 'building' | 'opened' | 'evidence-added' | 'quiet-period';

export interface EvaluationReport {
  evaluated: number;
  /** Rule+snapshot pairs judged before (another scheduler, or a re-run): never judged twice. */
  skipped: number;
  opened: number[];
  updated: number[];
  suppressed: number;
}

/** The latest decided alert of a rule within its quiet period, with the smallest surrogate p it was raised on. */
async function closedWithinQuietPeriod(rule: AlertRule, seriesId: number, now: Date, transaction: Transaction) {
  if (!(rule.quietPeriodHours > 0)) return null;
  const since = new Date(now.getTime() - rule.quietPeriodHours * 3_600_000);
  const closed = await Alert.findOne({
    where: { seriesId, ruleId: rule.id, state: { [Op.in]: ['dismissed', 'confirmed'] }, closedAt: { [Op.gte]: since } },
    order: [['closedAt', 'DESC']],
    transaction,
  });
  if (!closed) return null;
  const smallest = (await RuleEvaluation.min('surrogateP', { where: { alertId: closed.id }, transaction })) as number | null;
  return { alert: closed, surrogateP: smallest ?? null };
}

async function openAlert(rule: AlertRule, series: Series, snapshot: AnalysisSnapshot, judgement: Judgement, transaction: Transaction): Promise<Alert> {
  const alert = await Alert.create(
    {
      seriesId: series.id,
      ruleId: rule.id,
      state: 'new',
      severity: rule.severity,
      assigneeId: null,
      firstSnapshotId: snapshot.id,
      latestSnapshotId: snapshot.id,
      peakTau: judgement.tau,
      dismissReason: null,
      closedAt: null,
    },
    { transaction },
  );
  await AlertEvent.create({ alertId: alert.id, actorId: null, action: 'open', fromState: null, toState: 'new', reason: null, detail: `Rule #${rule.id} met on snapshot #${snapshot.id}.` }, { transaction });
  await recordAudit({ actorId: null, action: 'alert.open', entity: 'alert', entityId: alert.id, details: { seriesId: series.id, ruleId: rule.id, snapshotId: snapshot.id, tau: judgement.tau } }, transaction);
  const mail = newAlertMail(evidenceFrom(alert, series, rule, snapshot));
  for (const user of await watchersOf(series.id, ['immediate'], transaction)) {
    await enqueueMail({ kind: 'alert-new', dedupeKey: `alert-new:${alert.id}:user-${user.id}`, to: user.email, ...mail }, transaction);
  }
  return alert;
}

/**
 * Judges every active rule of each snapshot's series, in one pass over all fresh snapshots of an analysis cycle
 * (so rules with a false-discovery level are judged on the q-values of the whole cycle). Each rule+snapshot is
 * judged in its own transaction: the evaluation row (unique per rule and snapshot) is written together with the
 * alert it opens or extends and the new-alert mail in the outbox, so a crash or a second scheduler never judges
 * twice nor sends mail for an alert that does not exist.
 *
 * Persistence: `streak` counts consecutive passing evaluations of the rule; an alert opens when it reaches
 * `persistence`. While an alert is open, passing evaluations add evidence to it (latest snapshot, count, peak tau)
 * instead of opening another (the database also holds one open alert per series and rule).
 */
export async function evaluateSnapshots(snapshots: AnalysisSnapshot[], now = new Date()): Promise<EvaluationReport> {
  const report: EvaluationReport = { evaluated: 0, skipped: 0, opened: [], updated: [], suppressed: 0 };
  const usable = snapshots.filter((s) => s.status === 'ok').sort((a, b) => a.id - b.id);
  if (!usable.length) return report;
  const seriesIds = [...new Set(usable.map((s) => s.seriesId))];
  const [rules, seriesList] = await Promise.all([
    AlertRule.findAll({ where: { seriesId: { [Op.in]: seriesIds }, active: true }, order: [['id', 'ASC']] }),
    Series.findAll({ where: { id: { [Op.in]: seriesIds } } }),
  ]);
  const seriesById = new Map(seriesList.map((s) => [s.id, s]));
  const pairs = usable.flatMap((snapshot) => rules.filter((r) => r.seriesId === snapshot.seriesId).map((rule) => ({ snapshot, rule })));

  // One family for the false-discovery check: every FDR-enabled rule+snapshot of this cycle that has a surrogate p.
  const fdr = portfolioFdr(
    pairs.map(({ snapshot, rule }) => ({
      ruleId: rule.id,
      seriesId: snapshot.seriesId,
      fdrLevel: rule.fdrLevel,
      surrogateP: rule.fdrLevel !== null ? indicatorFacts(snapshot.summary as StoredSummary, rule.indicator).surrogateP : null,
    })),
  );

  for (const [index, { snapshot, rule }] of pairs.entries()) {
    const series = seriesById.get(snapshot.seriesId)!;
    const judgement = judgeRule(rule, snapshot.summary as StoredSummary, fdr[index].qValue);
    const outcome = await writeTransaction(async (transaction) => {
      const seen = await RuleEvaluation.findOne({ where: { ruleId: rule.id, snapshotId: snapshot.id }, attributes: ['id'], transaction });
      if (seen) return null;
      const previous = await RuleEvaluation.findOne({
        where: { ruleId: rule.id, snapshotId: { [Op.lt]: snapshot.id } },
        order: [['snapshotId', 'DESC']],
        transaction,
      });
      const streak = judgement.passed ? (previous?.passed ? previous.streak + 1 : 1) : 0;
      let result: EvaluationOutcome = judgement.passed ? 'building' : 'not-met';
      let alertId: number | null = null;
      if (judgement.passed && streak >= rule.persistence) {
        const open = await Alert.findOne({ where: { seriesId: series.id, ruleId: rule.id, state: { [Op.in]: [...OPEN_ALERT_STATES] } }, transaction });
        if (open) {
          await open.update(
            {
              latestSnapshotId: snapshot.id,
              evaluationCount: open.evaluationCount + 1,
              peakTau: open.peakTau === null || (judgement.tau !== null && judgement.tau > open.peakTau) ? judgement.tau : open.peakTau,
            },
            { transaction },
          );
          result = 'evidence-added';
          alertId = open.id;
        } else {
          const closed = await closedWithinQuietPeriod(rule, series.id, now, transaction);
          if (closed && !clearlyStronger(judgement, { peakTau: closed.alert.peakTau, surrogateP: closed.surrogateP })) {
            result = 'quiet-period';
          } else {
            alertId = (await openAlert(rule, series, snapshot, judgement, transaction)).id;
            result = 'opened';
          }
        }
      }
      await RuleEvaluation.create(
        {
          ruleId: rule.id,
          seriesId: series.id,
          snapshotId: snapshot.id,
          tau: judgement.tau,
          kendallP: judgement.kendallP,
          surrogateP: judgement.surrogateP,
          qValue: judgement.qValue,
          level: judgement.level,
          passed: judgement.passed,
          streak,
          alertId,
          outcome: judgement.passed ? result : `not-met: ${judgement.failed.join('; ')}`,
        },
        { transaction },
      );
      return { result, alertId };
    });
    if (!outcome) {
      report.skipped++;
      continue;
    }
    report.evaluated++;
    if (outcome.result === 'opened') report.opened.push(outcome.alertId!);
    if (outcome.result === 'evidence-added') report.updated.push(outcome.alertId!);
    if (outcome.result === 'quiet-period') report.suppressed++;
  }
  return report;
}
