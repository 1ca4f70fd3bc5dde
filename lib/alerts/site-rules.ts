import { Op, type Transaction } from 'sequelize';
import { Alert, AlertRule, OPEN_ALERT_STATES, Site, SiteRuleEvaluation, SiteSnapshot, db, writeTransaction } from '@/models';
import { NotFoundError } from '@/lib/http/errors';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { newAlertMail } from '@/lib/mail/templates';
import { mailAlertWatchers } from '@/lib/mail/watches';
import { enqueueWebhookEvent } from '@/lib/webhooks/outbox';
import { alertWebhookPayload } from '@/lib/webhooks/payloads';
import { siteRuleCreateSchema, type SiteRuleCreateInput } from '@/lib/schemas/rule';
import type { SiteAnalysisSummary } from '@/lib/sites/analysis-shape';
import { emptyJudgement, judgeOnce, judgeRule, type AlertScope, type Judgement } from './evaluate';
import { createAlert } from './open';
import { presentRule, standingOf } from './rules';
import { siteEvidenceFrom, siteSummaryForRules } from './site-evidence';

/**
 * Rules on a site's site-level indicators (pc1-variance, pc1-share, maf-ac1): set by a lead on the site page,
 * judged by the scheduler on each new site snapshot with the same `judgeRule`, persistence, quiet period and
 * one-open-alert-per-rule as series rules (judgeOnce), opening 'site-slowing-down' alerts that are triaged
 * like any other and mailed to the watchers of the site's series.
 */

/** The site rules of a site, oldest first. */
export async function listSiteRules(siteId: number): Promise<AlertRule[]> {
  await db();
  return AlertRule.findAll({ where: { siteId }, order: [['id', 'ASC']] });
}

/** Adds a rule on a site's site-level indicators (siteRuleCreateSchema), audited with its reason (actor null: the demo seed). */
export async function createSiteRule(siteId: number, input: SiteRuleCreateInput, actor: Pick<Actor, 'id'> | null): Promise<AlertRule> {
  const { reason, ...fields } = siteRuleCreateSchema.parse(input);
  return writeTransaction(async (transaction) => {
    if (!(await Site.findByPk(siteId, { transaction, attributes: ['id'] }))) throw new NotFoundError('Site');
    const rule = await AlertRule.create({ ...fields, seriesId: null, siteId, createdBy: actor?.id ?? null }, { transaction });
    await recordAudit(
      { actorId: actor?.id ?? null, action: 'rule.create', entity: 'alert_rule', entityId: rule.id, details: { siteId, ...fields, reason: reason ?? null } },
      transaction,
    );
    return rule;
  });
}

function siteScope(siteId: number): AlertScope {
  return {
    where: { siteId },
    smallestP: async (alertId, transaction) => ((await SiteRuleEvaluation.min('surrogateP', { where: { alertId }, transaction })) as number | null) ?? null,
  };
}

async function openSiteAlert(rule: AlertRule, site: Site, snapshot: SiteSnapshot, judgement: Judgement, transaction: Transaction): Promise<Alert> {
  const alert = await createAlert(
    {
      fields: {
        seriesId: null,
        siteId: site.id,
        ruleId: rule.id,
        kind: 'site-slowing-down',
        severity: rule.severity,
        firstSnapshotId: snapshot.id,
        latestSnapshotId: snapshot.id,
        peakTau: judgement.orientedTau,
      },
      detail: `Site rule #${rule.id} met on site snapshot #${snapshot.id}.`,
      audit: { siteId: site.id, ruleId: rule.id, siteSnapshotId: snapshot.id, tau: judgement.tau, direction: rule.direction },
    },
    transaction,
  );
  const evidence = siteEvidenceFrom(alert, site, rule, snapshot);
  await mailAlertWatchers(alert, newAlertMail(evidence), 'alert-new', transaction);
  await enqueueWebhookEvent('alert.opened', alertWebhookPayload('alert.opened', evidence, null, alert.createdAt), transaction);
  return alert;
}

export interface SiteEvaluationReport {
  evaluated: number;
  opened: number[];
  updated: number[];
}

/**
 * Judges every active site rule on the latest site snapshot of its site, once per rule and snapshot (the unique
 * index of site_rule_evaluations; a pair already judged, by this or another scheduler, is passed over), so a
 * scheduler that died between computing a site snapshot and judging it is made good by the next cycle. Each pair
 * is judged in its own transaction with the alert it opens or extends and the mail and webhook it queues. A failed
 * site computation is recorded as cannot-judge and breaks the streak. Four queries plus O(1) per rule judged.
 */
export async function evaluateSiteRules(now = new Date()): Promise<SiteEvaluationReport> {
  const report: SiteEvaluationReport = { evaluated: 0, opened: [], updated: [] };
  await db();
  const rules = await AlertRule.findAll({ where: { siteId: { [Op.ne]: null }, active: true }, order: [['id', 'ASC']] });
  if (!rules.length) return report;
  const siteIds = [...new Set(rules.map((r) => r.siteId!))];
  const [sites, latestIds] = await Promise.all([
    Site.findAll({ where: { id: { [Op.in]: siteIds } } }),
    Promise.all(siteIds.map((siteId) => SiteSnapshot.max('id', { where: { siteId } }) as Promise<number | null>)),
  ]);
  const siteById = new Map(sites.map((s) => [s.id, s]));
  const snapshots = await SiteSnapshot.findAll({
    where: { id: { [Op.in]: latestIds.filter((id): id is number => id !== null) } },
    attributes: { exclude: ['curves'] },
  });
  const snapshotOf = new Map(snapshots.map((s) => [s.siteId, s]));
  // Pairs judged already are passed over before taking the write lock; the check inside the transaction settles races.
  const judged = await SiteRuleEvaluation.findAll({
    where: { ruleId: { [Op.in]: rules.map((r) => r.id) }, siteSnapshotId: { [Op.in]: snapshots.map((s) => s.id) } },
    attributes: ['ruleId', 'siteSnapshotId'],
  });
  const done = new Set(judged.map((e) => `${e.ruleId}:${e.siteSnapshotId}`));
  for (const rule of rules) {
    const snapshot = snapshotOf.get(rule.siteId!);
    const site = siteById.get(rule.siteId!);
    if (!snapshot || !site || done.has(`${rule.id}:${snapshot.id}`)) continue;
    const judgement: Judgement =
      snapshot.status === 'ok'
        ? judgeRule(rule, siteSummaryForRules(snapshot.summary as SiteAnalysisSummary, snapshot.dataTo))
        : { ...emptyJudgement(rule), cannotJudge: `the site analysis could not run: ${snapshot.error ?? 'no reason given'}` };
    const outcome = await judgeOnce({
      rule,
      judgement,
      scope: siteScope(site.id),
      snapshotId: snapshot.id,
      now,
      open: (transaction) => openSiteAlert(rule, site, snapshot, judgement, transaction),
      trail: {
        judged: async (transaction) => (await SiteRuleEvaluation.count({ where: { ruleId: rule.id, siteSnapshotId: snapshot.id }, transaction })) > 0,
        previous: (transaction) =>
          SiteRuleEvaluation.findOne({
            where: { ruleId: rule.id, siteSnapshotId: { [Op.lt]: snapshot.id } },
            order: [['siteSnapshotId', 'DESC']],
            transaction,
          }),
        write: (entry, transaction) =>
          SiteRuleEvaluation.create(
            {
              ruleId: rule.id,
              siteId: site.id,
              siteSnapshotId: snapshot.id,
              direction: rule.direction,
              tau: judgement.tau,
              surrogateP: judgement.surrogateP,
              level: judgement.level,
              passed: judgement.passed,
              ...entry,
            },
            { transaction },
          ),
      },
    });
    if (!outcome) continue;
    report.evaluated++;
    if (outcome.result === 'opened') report.opened.push(outcome.alertId!);
    if (outcome.result === 'evidence-added') report.updated.push(outcome.alertId!);
  }
  return report;
}

/** Every rule of a site with its latest judgement and its open alert, as the site page shows them. One lookup per rule. */
export async function siteRuleStatuses(siteId: number) {
  const rules = await listSiteRules(siteId);
  const [latest, open] = await Promise.all([
    Promise.all(rules.map((r) => SiteRuleEvaluation.findOne({ where: { ruleId: r.id }, order: [['siteSnapshotId', 'DESC']] }))),
    Alert.findAll({ where: { siteId, state: { [Op.in]: [...OPEN_ALERT_STATES] } }, attributes: ['id', 'ruleId', 'state'] }),
  ]);
  return rules.map((rule, i) => {
    const e = latest[i];
    const alert = open.find((a) => a.ruleId === rule.id) ?? null;
    return {
      rule: presentRule(rule),
      standing: standingOf(e),
      latest: e
        ? { siteSnapshotId: e.siteSnapshotId, at: e.createdAt.toISOString(), outcome: e.outcome, tau: e.tau, surrogateP: e.surrogateP, streak: e.streak }
        : null,
      openAlert: alert ? { id: alert.id, state: alert.state } : null,
    };
  });
}
export type SiteRuleStatus = Awaited<ReturnType<typeof siteRuleStatuses>>[number];
