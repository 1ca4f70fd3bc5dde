import { Op, QueryTypes, type Transaction } from 'sequelize';
import { Alert, AlertRule, RuleEvaluation, Series, db, writeTransaction, OPEN_ALERT_STATES, type AnalysisSnapshot } from '@/models';
import { createAlert } from './open';
import { latestRuleCalibration, type RuleCalibration } from '@/lib/backtest/jobs';
import { trendDirectionOf, type TrendDirection } from '@/lib/engine/direction';
import { portfolioFdr, type PortfolioEntry } from './portfolio-fdr';
import { newAlertMail } from '@/lib/mail/templates';
import { mailAlertWatchers } from '@/lib/mail/watches';
import { evidenceFrom, snapshotTaus } from './evidence';
import { indicatorFacts, type StoredSummary } from './facts';
import { seriesBreaks } from '@/lib/analysis/snapshot';
import { enqueueWebhookEvent } from '@/lib/webhooks/outbox';
import { alertWebhookPayload } from '@/lib/webhooks/payloads';

/** The thresholds of a rule that judgement reads (an AlertRule or its plain fields). */
export type RuleThresholds = Pick<AlertRule, 'indicator' | 'direction' | 'minTau' | 'maxSurrogateP' | 'levelThreshold' | 'levelDirection' | 'fdrLevel'>;

export interface Judgement {
  /** the direction the rule looks in, as a test direction */
  direction: TrendDirection;
  /** Kendall tau as computed (raw sign) */
  tau: number | null;
  /** tau seen in the rule's direction (what minTau and the quiet period compare) */
  orientedTau: number | null;
  /** descriptive only (assumes independent values); in the indicator's own direction */
  kendallP: number | null;
  /** Monte Carlo p against the surrogates, in the rule's direction */
  surrogateP: number | null;
  /** standard deviation of the surrogate taus: the null spread of tau */
  nullSd: number | null;
  qValue: number | null;
  level: number | null;
  passed: boolean;
  /** Which tests failed, in words, for the evidence trail. */
  failed: string[];
  /** Why the rule could not be judged on this evidence at all (a number it needs is missing); null when judged. */
  cannotJudge: string | null;
}

/**
 * Judges one rule on one snapshot summary. Every configured test must pass: tau seen in the rule's direction
 * (orientedTau: τ rising, −τ falling, |τ| either way) ≥ minTau; surrogate p in the rule's direction ≤
 * maxSurrogateP; with fdrLevel, the Benjamini–Hochberg q-value ≤ fdrLevel; the indicator's latest value above (≥)
 * or below (≤) levelThreshold. The Kendall p is not a test (it assumes independent values). When a number a test
 * needs is missing (indicator not computed, no trend because too few windows had enough observed points, no
 * surrogates, no latest value), the rule is not judged: `cannotJudge` says why and the judgement does not pass.
 * `taus` are the snapshot's surrogate taus of the indicator, needed only when the rule looks another way than the
 * stored p (see indicatorFacts). O(1), or O(N) with N surrogate taus.
 */
export function judgeRule(rule: RuleThresholds, summary: StoredSummary, qValue: number | null = null, taus: number[] | null = null): Judgement {
  const direction = trendDirectionOf(rule.direction);
  const facts = indicatorFacts(summary, rule.indicator, direction, taus);
  const needsSurrogates = rule.maxSurrogateP !== null || rule.fdrLevel !== null;
  let cannotJudge: string | null = null;
  if (!facts.computed) cannotJudge = `${rule.indicator} is not among the computed indicators`;
  else if (facts.tau === null) {
    const below = summary.quality?.windowsBelowCoverage;
    cannotJudge = `no ${rule.indicator} trend: too few windows with a value${below ? ` (${below} windows below the coverage floor)` : ''}`;
  } else if (needsSurrogates && !facts.surrogateTested) cannotJudge = 'no surrogate test (the series runs no surrogates)';
  else if (needsSurrogates && facts.needsTaus)
    cannotJudge = `the surrogate p ${DIRECTION_TEXT[direction]} needs the surrogate taus, which this snapshot no longer keeps`;
  else if (needsSurrogates && facts.surrogateP === null) cannotJudge = 'no surrogate p (no surrogate gave a defined tau)';
  else if (rule.levelThreshold !== null && facts.level === null) cannotJudge = `no latest ${rule.indicator} value`;

  const failed: string[] = [];
  if (!cannotJudge) {
    if (facts.orientedTau! < rule.minTau) failed.push(`tau ${DIRECTION_TEXT[direction]} below ${rule.minTau}`);
    if (rule.maxSurrogateP !== null && facts.surrogateP! > rule.maxSurrogateP) failed.push(`surrogate p above ${rule.maxSurrogateP}`);
    if (rule.fdrLevel !== null && (qValue === null || qValue > rule.fdrLevel))
      failed.push(qValue === null ? 'not in the false-discovery family' : `q-value above ${rule.fdrLevel}`);
    if (rule.levelThreshold !== null) {
      const below = rule.levelDirection === 'below';
      if (below ? facts.level! > rule.levelThreshold : facts.level! < rule.levelThreshold)
        failed.push(`latest value not ${below ? 'at or below' : 'at or above'} ${rule.levelThreshold}`);
    }
  }
  return {
    direction,
    tau: facts.tau,
    orientedTau: facts.orientedTau,
    kendallP: facts.kendallP,
    surrogateP: needsSurrogates || facts.surrogateTested ? facts.surrogateP : null,
    nullSd: facts.nullSd,
    qValue,
    level: facts.level,
    passed: cannotJudge === null && failed.length === 0,
    failed,
    cannotJudge,
  };
}

const DIRECTION_TEXT: Record<TrendDirection, string> = { rising: '(rising)', falling: '(falling)', 'two-sided': '(either way)' };

/** A later alert within a quiet period must beat the decided one's peak oriented tau by this many null standard deviations. */
const QUIET_NULL_SDS = 2;

/**
 * Whether new evidence is clearly stronger than that of a dismissed (or confirmed) alert, so it may break the
 * rule's quiet period. Our convention, derived from the surrogate null rather than from the independent-data
 * formula for var τ (which overlapping windows make about 15× too small):
 *
 *   oriented τ_new ≥ peak oriented τ_closed + 2·σ₀   AND   p_new ≤ smallest p of the closed alert (when it had one),
 *
 * where σ₀ is the standard deviation of the surrogate taus of the new analysis (summary.significance[ind].nullSd):
 * the spread tau shows on records with no slowing down. A rise of two null standard deviations is one that the
 * null alone gives about 2.3 % of the time (one-sided, normal approximation — common practice), so a re-raised
 * alert rests on a trend that has clearly moved on, not on noise around the decided level. The p condition asks
 * for evidence at least as strong; "not larger" (not "half") so that a closed alert at the floor 1/(N + 1) can be
 * matched. Without a null spread (no surrogates, or a snapshot from before nullSd was stored) nothing is clearly
 * stronger and the quiet period holds. O(1).
 */
export function clearlyStronger(
  current: { orientedTau: number | null; surrogateP: number | null; nullSd: number | null },
  closed: { peakTau: number | null; surrogateP: number | null },
): boolean {
  if (current.orientedTau === null || current.nullSd === null || !Number.isFinite(current.nullSd)) return false;
  if (closed.peakTau !== null && current.orientedTau < closed.peakTau + QUIET_NULL_SDS * current.nullSd) return false;
  if (closed.surrogateP !== null && (current.surrogateP === null || current.surrogateP > closed.surrogateP)) return false;
  return true;
}

export type EvaluationOutcome = 'not-met' | 'cannot-judge' | 'building' | 'opened' | 'evidence-added' | 'quiet-period';

export interface EvaluationReport {
  evaluated: number;
  /** Rule+snapshot pairs judged before (another scheduler, or a re-run): never judged twice. */
  skipped: number;
  opened: number[];
  updated: number[];
  suppressed: number;
  /** rule+snapshot pairs recorded as 'cannot-judge: …' */
  cannotJudge: number;
  /** abrupt-shift alerts opened */
  shifts: number[];
}

/**
 * What an alert of a rule is on: a series (rule_evaluations) or a site (site_rule_evaluations, lib/alerts/site-rules.ts).
 * `where` finds the rule's alerts there; `smallestP` is the smallest surrogate p an alert was raised or extended on.
 */
export interface AlertScope {
  where: { seriesId: number } | { siteId: number };
  smallestP: (alertId: number, transaction: Transaction) => Promise<number | null>;
}

/** The latest decided alert of a rule within its quiet period, with the smallest surrogate p it was raised on. */
async function closedWithinQuietPeriod(rule: AlertRule, scope: AlertScope, now: Date, transaction: Transaction) {
  if (!(rule.quietPeriodHours > 0)) return null;
  const since = new Date(now.getTime() - rule.quietPeriodHours * 3_600_000);
  const closed = await Alert.findOne({
    where: { ...scope.where, ruleId: rule.id, state: { [Op.in]: ['dismissed', 'confirmed'] }, closedAt: { [Op.gte]: since } },
    order: [['closedAt', 'DESC']],
    transaction,
  });
  if (!closed) return null;
  return { alert: closed, surrogateP: await scope.smallestP(closed.id, transaction) };
}

/**
 * What a judgement does, inside the caller's transaction, for series and site rules alike: with the rule's
 * persistence reached (`streak`), it adds evidence to the rule's open alert in `scope` (latest snapshot, count, peak
 * oriented tau), or is held back by the quiet period after a decided alert unless clearly stronger, or opens an
 * alert through `open`. Otherwise it is 'cannot-judge', 'not-met' or 'building'. O(1) queries.
 */
async function actOnJudgement(args: {
  rule: AlertRule;
  judgement: Judgement;
  streak: number;
  scope: AlertScope;
  snapshotId: number;
  now: Date;
  open: () => Promise<Alert>;
  transaction: Transaction;
}): Promise<{ result: EvaluationOutcome; alertId: number | null }> {
  const { rule, judgement, streak, scope, snapshotId, now, transaction } = args;
  if (!judgement.passed || streak < rule.persistence)
    return { result: judgement.cannotJudge ? 'cannot-judge' : judgement.passed ? 'building' : 'not-met', alertId: null };
  const open = await Alert.findOne({ where: { ...scope.where, ruleId: rule.id, state: { [Op.in]: [...OPEN_ALERT_STATES] } }, transaction });
  if (open) {
    const stronger = open.peakTau === null || (judgement.orientedTau !== null && judgement.orientedTau > open.peakTau);
    await open.update(
      { latestSnapshotId: snapshotId, evaluationCount: open.evaluationCount + 1, peakTau: stronger ? judgement.orientedTau : open.peakTau },
      { transaction },
    );
    return { result: 'evidence-added', alertId: open.id };
  }
  const closed = await closedWithinQuietPeriod(rule, scope, now, transaction);
  if (closed && !clearlyStronger(judgement, { peakTau: closed.alert.peakTau, surrogateP: closed.surrogateP })) return { result: 'quiet-period', alertId: null };
  return { result: 'opened', alertId: (await args.open()).id };
}

/**
 * Where one kind of rule keeps its judgements (series rules in rule_evaluations, site rules in
 * site_rule_evaluations), for one rule and snapshot: whether that pair is judged already, the rule's judgement on
 * the snapshot before, and how the new one is written.
 */
export interface JudgementTrail {
  judged(transaction: Transaction): Promise<boolean>;
  previous(transaction: Transaction): Promise<{ passed: boolean; streak: number } | null>;
  write(entry: { streak: number; alertId: number | null; outcome: string }, transaction: Transaction): Promise<unknown>;
}

/**
 * Judges a rule on one snapshot exactly once, in one write transaction: null for a pair judged already (by this or
 * another scheduler); otherwise the streak continues the previous judgement's when both passed, the judgement is
 * acted on (actOnJudgement), and the evaluation is written with the alert it opened or extended, so a crash never
 * leaves an alert without its evaluation or the other way round. O(1) queries.
 */
export async function judgeOnce(
  args: Omit<Parameters<typeof actOnJudgement>[0], 'streak' | 'transaction' | 'open'> & {
    open: (transaction: Transaction) => Promise<Alert>;
    trail: JudgementTrail;
  },
): Promise<{ result: EvaluationOutcome; alertId: number | null } | null> {
  const { trail, judgement, open } = args;
  return writeTransaction(async (transaction) => {
    if (await trail.judged(transaction)) return null;
    const previous = await trail.previous(transaction);
    const streak = judgement.passed ? (previous?.passed ? previous.streak + 1 : 1) : 0;
    const acted = await actOnJudgement({ ...args, streak, open: () => open(transaction), transaction });
    await trail.write({ streak, alertId: acted.alertId, outcome: outcomeText(judgement, acted.result) }, transaction);
    return acted;
  });
}

async function openAlert(
  rule: AlertRule,
  series: Series,
  snapshot: AnalysisSnapshot,
  judgement: Judgement,
  calibration: RuleCalibration | null,
  taus: number[] | null,
  transaction: Transaction,
): Promise<Alert> {
  const alert = await createAlert(
    {
      fields: {
        seriesId: series.id,
        ruleId: rule.id,
        severity: rule.severity,
        firstSnapshotId: snapshot.id,
        latestSnapshotId: snapshot.id,
        peakTau: judgement.orientedTau,
      },
      detail: `Rule #${rule.id} met on snapshot #${snapshot.id}.`,
      audit: { seriesId: series.id, ruleId: rule.id, snapshotId: snapshot.id, tau: judgement.tau, direction: rule.direction },
    },
    transaction,
  );
  const evidence = evidenceFrom(alert, series, rule, snapshot, calibration, taus);
  await mailAlertWatchers(alert, newAlertMail(evidence), 'alert-new', transaction);
  await enqueueWebhookEvent('alert.opened', alertWebhookPayload('alert.opened', evidence, null, alert.createdAt), transaction);
  return alert;
}

/**
 * Two detections of one shift in successive analyses may differ by a few grid points as data arrive; a shift
 * within this many sampling intervals after the latest alerted one is taken to be the same shift. Our convention.
 */
const SAME_SHIFT_INTERVALS = 10;

/**
 * Whether a lead's mark already explains a shift: the mark (a tipping point, or a maintenance break such as a probe
 * cleaned or swapped) lies at most SAME_SHIFT_INTERVALS before it — as late as a shift is first located — or up to
 * one rolling window before it (the settling time after a mark that backtests also leave out). A shift a lead has
 * already marked is not news. O(marks).
 */
export function explainedByMark(shiftTime: number, marks: number[], summary: Pick<StoredSummary, 'interval' | 'windowPoints'>): boolean {
  const interval = summary.interval ?? 0;
  const settle = Math.max(SAME_SHIFT_INTERVALS, summary.windowPoints ?? 0) * interval;
  return marks.some((at) => at - SAME_SHIFT_INTERVALS * interval <= shiftTime && shiftTime <= at + settle);
}

/**
 * Opens an abrupt-shift alert when the snapshot's detected shifts include one newer than any shift already alerted
 * for the series (by more than SAME_SHIFT_INTERVALS) and not explained by a mark (explainedByMark), so re-analysis
 * never reopens the same shift; the newest such shift is alerted, earlier new ones are named in its timeline. The database holds one alert per series and shift
 * instant. Mailed to immediate watchers and queued for webhooks in the same transaction. Null when nothing new.
 */
async function openShiftAlert(series: Series, snapshot: AnalysisSnapshot): Promise<number | null> {
  const summary = snapshot.summary as StoredSummary;
  const shifts = (summary.shifts ?? []).filter((s) => Number.isFinite(s.time));
  if (!shifts.length) return null;
  return writeTransaction(async (transaction) => {
    const alerted = (await Alert.max('shiftTime', { where: { seriesId: series.id, kind: 'abrupt-shift' }, transaction })) as number | string | null;
    const after = alerted === null ? -Infinity : Number(alerted) + SAME_SHIFT_INTERVALS * (summary.interval ?? 0);
    const marks = (await seriesBreaks(series.id, {}, transaction)).map((mark) => mark.time);
    const fresh = shifts.filter((s) => s.time > after && !explainedByMark(s.time, marks, summary)).sort((a, b) => a.time - b.time);
    if (!fresh.length) return null;
    const shift = fresh[fresh.length - 1];
    const earlier =
      fresh.length > 1
        ? ` Earlier shifts first seen in the same analysis: ${fresh
            .slice(0, -1)
            .map((s) => new Date(s.time).toISOString())
            .join(', ')}.`
        : '';
    const alert = await createAlert(
      {
        fields: {
          seriesId: series.id,
          ruleId: null,
          kind: 'abrupt-shift',
          shiftTime: shift.time,
          shiftSize: shift.size ?? null,
          severity: 'warning',
          firstSnapshotId: snapshot.id,
          latestSnapshotId: snapshot.id,
          peakTau: null,
        },
        detail: `Abrupt shift at ${new Date(shift.time).toISOString()} detected on snapshot #${snapshot.id}.${earlier}`,
        audit: { seriesId: series.id, kind: 'abrupt-shift', snapshotId: snapshot.id, shift },
      },
      transaction,
    );
    const evidence = evidenceFrom(alert, series, null, snapshot, null);
    await mailAlertWatchers(alert, newAlertMail(evidence), 'alert-shift', transaction);
    await enqueueWebhookEvent('alert.abrupt-shift', alertWebhookPayload('alert.abrupt-shift', evidence, null, alert.createdAt), transaction);
    return alert.id;
  });
}

/**
 * The latest surrogate p of every active FDR rule on a live series outside `except` (rules judged in this cycle
 * bring their fresh p): the rest of the Benjamini–Hochberg family. One indexed lookup per rule.
 */
export async function fdrFamilyOutside(except: Set<number>): Promise<PortfolioEntry[]> {
  const sequelize = await db();
  const rows = await sequelize.query<{ rule_id: number; series_id: number; fdr_level: number; surrogate_p: number | null }>(
    `SELECT r.id AS rule_id, r.series_id, r.fdr_level,
       (SELECT e.surrogate_p FROM rule_evaluations e WHERE e.rule_id = r.id ORDER BY e.snapshot_id DESC LIMIT 1) AS surrogate_p
     FROM alert_rules r JOIN series s ON s.id = r.series_id AND s.retired_at IS NULL
     WHERE r.active AND r.fdr_level IS NOT NULL`,
    { type: QueryTypes.SELECT },
  );
  return rows
    .filter((r) => !except.has(Number(r.rule_id)))
    .map((r) => ({
      ruleId: Number(r.rule_id),
      seriesId: Number(r.series_id),
      fdrLevel: Number(r.fdr_level),
      surrogateP: r.surrogate_p === null ? null : Number(r.surrogate_p),
    }));
}

/**
 * Judges every active rule of each snapshot's series, in one pass over all fresh snapshots of an analysis cycle.
 * Each rule+snapshot is judged in its own transaction: the evaluation row (unique per rule and snapshot) is
 * written together with the alert it opens or extends and the new-alert mail in the outbox, so a crash or a
 * second scheduler never judges twice nor sends mail for an alert that does not exist.
 *
 * A failed analysis, or one lacking a number a rule needs, is recorded as 'cannot-judge: <why>' (see
 * ruleStatuses), never skipped silently; it breaks the streak. False-discovery control: the Benjamini–Hochberg
 * family is every active FDR rule on a live series, each with its latest surrogate p — fresh for the rules judged
 * now, the stored latest for the others — not only the series that received data this cycle.
 *
 * Persistence: `streak` counts consecutive passing evaluations of the rule; an alert opens when it reaches
 * `persistence`. While an alert is open, passing evaluations add evidence to it (latest snapshot, count, peak tau)
 * instead of opening another (the database also holds one open alert per series and rule). Fresh snapshots
 * whose detected shifts include a new one also open an abrupt-shift alert (see openShiftAlert).
 */
export async function evaluateSnapshots(snapshots: AnalysisSnapshot[], now = new Date()): Promise<EvaluationReport> {
  const report: EvaluationReport = { evaluated: 0, skipped: 0, opened: [], updated: [], suppressed: 0, cannotJudge: 0, shifts: [] };
  const usable = snapshots.filter((s) => s.status === 'ok' || s.status === 'error').sort((a, b) => a.id - b.id);
  if (!usable.length) return report;
  const seriesIds = [...new Set(usable.map((s) => s.seriesId))];
  const [rules, seriesList] = await Promise.all([
    AlertRule.findAll({ where: { seriesId: { [Op.in]: seriesIds }, active: true }, order: [['id', 'ASC']] }),
    Series.findAll({ where: { id: { [Op.in]: seriesIds } } }),
  ]);
  const seriesById = new Map(seriesList.map((s) => [s.id, s]));
  const calibrations = await latestRuleCalibration(rules.map((r) => r.id));
  const pairs = await Promise.all(
    usable.flatMap((snapshot) =>
      rules
        .filter((r) => r.seriesId === snapshot.seriesId)
        .map(async (rule) => {
          if (snapshot.status !== 'ok') return { snapshot, rule, taus: null, surrogateP: null };
          const summary = snapshot.summary as StoredSummary;
          const wanted = trendDirectionOf(rule.direction);
          const plain = indicatorFacts(summary, rule.indicator, wanted);
          // The stored p is in the indicator's own direction; a surrogate test in another direction needs the taus.
          const taus = plain.needsTaus && (rule.maxSurrogateP !== null || rule.fdrLevel !== null) ? await snapshotTaus(snapshot.id, rule.indicator) : null;
          const facts = taus ? indicatorFacts(summary, rule.indicator, wanted, taus) : plain;
          return { snapshot, rule, taus, surrogateP: facts.surrogateP };
        }),
    ),
  );

  // Benjamini–Hochberg over the whole portfolio: each FDR rule's latest p (this cycle's latest snapshot, else stored).
  const latestPair = new Map<number, number>();
  pairs.forEach((p, i) => {
    if (p.rule.fdrLevel !== null && p.snapshot.status === 'ok') latestPair.set(p.rule.id, i);
  });
  const others = await (latestPair.size ? fdrFamilyOutside(new Set(latestPair.keys())) : Promise.resolve([]));
  const slotOf = new Map([...latestPair.values()].map((pairIndex, slot) => [pairIndex, slot]));
  const family: PortfolioEntry[] = [...latestPair.values()].map((i) => ({
    ruleId: pairs[i].rule.id,
    seriesId: pairs[i].snapshot.seriesId,
    fdrLevel: pairs[i].rule.fdrLevel,
    surrogateP: pairs[i].surrogateP,
  }));
  const decided = portfolioFdr([...family, ...others]);
  const qOf = (index: number): number | null => {
    const pair = pairs[index];
    if (pair.rule.fdrLevel === null) return null;
    const slot = slotOf.get(index);
    if (slot !== undefined) return decided[slot].qValue;
    // An earlier snapshot of the same rule in this batch: its own p in place of the rule's latest.
    const swapped = family.map((e) => (e.ruleId === pair.rule.id ? { ...e, surrogateP: pair.surrogateP } : e));
    return portfolioFdr([...swapped, ...others])[swapped.findIndex((e) => e.ruleId === pair.rule.id)]?.qValue ?? null;
  };

  for (const [index, { snapshot, rule, taus }] of pairs.entries()) {
    const series = seriesById.get(snapshot.seriesId)!;
    const judgement: Judgement =
      snapshot.status === 'ok'
        ? judgeRule(rule, snapshot.summary as StoredSummary, qOf(index), taus)
        : { ...emptyJudgement(rule), cannotJudge: `the analysis failed: ${snapshot.error ?? 'no reason given'}` };
    const outcome = await judgeOnce({
      rule,
      judgement,
      scope: seriesScope(series.id),
      snapshotId: snapshot.id,
      now,
      open: (transaction) => openAlert(rule, series, snapshot, judgement, calibrations.get(rule.id) ?? null, taus, transaction),
      trail: {
        judged: async (transaction) => (await RuleEvaluation.count({ where: { ruleId: rule.id, snapshotId: snapshot.id }, transaction })) > 0,
        previous: (transaction) =>
          RuleEvaluation.findOne({ where: { ruleId: rule.id, snapshotId: { [Op.lt]: snapshot.id } }, order: [['snapshotId', 'DESC']], transaction }),
        write: (entry, transaction) =>
          RuleEvaluation.create(
            {
              ruleId: rule.id,
              seriesId: series.id,
              snapshotId: snapshot.id,
              direction: rule.direction,
              tau: judgement.tau,
              kendallP: judgement.kendallP,
              surrogateP: judgement.surrogateP,
              qValue: judgement.qValue,
              level: judgement.level,
              passed: judgement.passed,
              ...entry,
            },
            { transaction },
          ),
      },
    });
    if (!outcome) {
      report.skipped++;
      continue;
    }
    report.evaluated++;
    if (outcome.result === 'opened') report.opened.push(outcome.alertId!);
    if (outcome.result === 'evidence-added') report.updated.push(outcome.alertId!);
    if (outcome.result === 'quiet-period') report.suppressed++;
    if (outcome.result === 'cannot-judge') report.cannotJudge++;
  }

  // Abrupt shifts: the latest successful snapshot of each series in this batch.
  const latestOk = new Map<number, AnalysisSnapshot>();
  for (const snapshot of usable) if (snapshot.status === 'ok') latestOk.set(snapshot.seriesId, snapshot);
  for (const snapshot of latestOk.values()) {
    const id = await openShiftAlert(seriesById.get(snapshot.seriesId)!, snapshot);
    if (id !== null) report.shifts.push(id);
  }
  return report;
}

/** How a judgement is kept in the evidence trail: the outcome, or why it failed or could not be judged. */
function outcomeText(judgement: Judgement, result: EvaluationOutcome): string {
  if (judgement.cannotJudge) return `cannot-judge: ${judgement.cannotJudge}`;
  return judgement.passed ? result : `not-met: ${judgement.failed.join('; ')}`;
}

/** A series rule's alerts, and the smallest surrogate p of an alert's evaluations. */
function seriesScope(seriesId: number): AlertScope {
  return {
    where: { seriesId },
    smallestP: async (alertId, transaction) => ((await RuleEvaluation.min('surrogateP', { where: { alertId }, transaction })) as number | null) ?? null,
  };
}

/** A judgement with no numbers, for evidence that cannot be read at all (a failed analysis). */
export function emptyJudgement(rule: RuleThresholds): Judgement {
  return {
    direction: trendDirectionOf(rule.direction),
    tau: null,
    orientedTau: null,
    kendallP: null,
    surrogateP: null,
    nullSd: null,
    qValue: null,
    level: null,
    passed: false,
    failed: [],
    cannotJudge: null,
  };
}
