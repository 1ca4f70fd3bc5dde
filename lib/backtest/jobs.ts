import { Op, type Transaction } from 'sequelize';
import { AlertRule, BacktestJob, Series, db, writeTransaction } from '@/models';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { loadObservations } from '@/lib/analysis/observations';
import { analysisSettingsSchema, type IndicatorName } from '@/lib/engine/settings';
import { ConflictError, NotFoundError, UnprocessableError } from '@/lib/http/errors';
import type { BacktestRequest } from '@/lib/schemas/backtest';
import type { RuleFields } from '@/lib/schemas/rule';
import { findSeriesBySlug } from '@/lib/series/registry';
import { CancelledError } from './pool';
import { listMarks } from '@/lib/marks/read';
import { ruleDirectionOf, type ReplayRule } from './replay';
import { CALIBRATION_WORK_BUDGET, runBacktest, type BacktestResult } from './run';

const DAY_MS = 86_400_000;
/** How often a running job writes its progress and looks for a cancel request. */
const PROGRESS_EVERY_MS = 500;
/**
 * Live defaults of a rule's own calibration: 200 AR(1) surrogates of the record before the first tipping point, each judged
 * every point (every new point may start an analysis cycle, the most checks a live series can see), and as many
 * simulated approaches. 200 replicates put a binomial standard error of at most 3.5 points on the share of
 * replicates that alarm; our own choice of cost against precision. It runs in the background, so its surrogate
 * checks get three times a lead's interactive budget (about three minutes on two cores).
 */
const RULE_CALIBRATION = { every: 1, horizonDays: null, calibration: { surrogates: 200, method: 'ar1' as const, budget: 3 * CALIBRATION_WORK_BUDGET } };

/**
 * The parts of a stored rule a replay judges. `direction` is read when the rule record has it and falls back
 * to the indicator's own direction otherwise (rules stored before the field existed).
 */
export function replayRuleOf(
  rule: Pick<
    AlertRule,
    'indicator' | 'direction' | 'minTau' | 'maxKendallP' | 'maxSurrogateP' | 'levelThreshold' | 'levelDirection' | 'persistence' | 'quietPeriodHours'
  >,
): ReplayRule {
  const indicator = rule.indicator as IndicatorName;
  return {
    indicator,
    direction: ruleDirectionOf({ indicator, direction: rule.direction }),
    minTau: rule.minTau,
    maxKendallP: rule.maxKendallP,
    maxSurrogateP: rule.maxSurrogateP,
    levelThreshold: rule.levelThreshold,
    levelDirection: rule.levelDirection,
    persistence: rule.persistence,
    quietPeriodHours: rule.quietPeriodHours,
  };
}

/** Same judged fields (what makes a stored calibration still the rule's own). */
function sameRule(a: ReplayRule, b: ReplayRule | undefined): boolean {
  if (!b) return false;
  return (Object.keys(a) as (keyof ReplayRule)[]).every((k) => k === 'maxKendallP' || a[k] === b[k]);
}

export function presentBacktestJob(job: BacktestJob, options: { withResult?: boolean } = {}) {
  return {
    id: job.id,
    ruleId: job.ruleId,
    seriesId: job.seriesId,
    kind: job.kind,
    status: job.status,
    progress: job.progress,
    params: job.params,
    error: job.error,
    cancelRequested: job.cancelRequested,
    createdBy: job.createdBy,
    createdAt: job.createdAt,
    startedAt: job.startedAt,
    finishedAt: job.finishedAt,
    ...(options.withResult ? { result: job.result as BacktestResult | null } : {}),
  };
}
export type BacktestJobRecord = ReturnType<typeof presentBacktestJob>;

/**
 * Queues a backtest of a rule on its series (or, for a default rule, on `request.series`); with `request.draft` the
 * replay judges the draft's fields instead of the stored ones (the rule editor's backtest of unsaved changes).
 */
export async function requestBacktest(ruleId: number, request: BacktestRequest, actor: Pick<Actor, 'id'>): Promise<BacktestJob> {
  await db();
  const rule = await AlertRule.findByPk(ruleId);
  if (!rule) throw new NotFoundError('Rule');
  if (rule.siteId !== null)
    throw new UnprocessableError('A site rule judges the site’s series together; a backtest replays one series, so it cannot replay this rule.', {
      _: ['site rules have no backtest'],
    });
  let seriesId = rule.seriesId;
  if (request.series !== undefined) {
    const series = await findSeriesBySlug(request.series);
    if (rule.seriesId !== null && rule.seriesId !== series.id)
      throw new UnprocessableError('This rule belongs to another series.', { series: ['not the rule’s series'] });
    seriesId = series.id;
  }
  if (seriesId === null) throw new UnprocessableError('A default rule needs a series to replay on.', { series: ['required for a default rule'] });
  const sid = seriesId;
  return writeTransaction(async (transaction) => {
    const job = await BacktestJob.create(
      {
        ruleId,
        seriesId: sid,
        kind: request.calibration ? 'calibration' : 'backtest',
        params: {
          every: request.every,
          horizonDays: request.horizonDays,
          calibration: request.calibration,
          ...(request.draft ? { draft: request.draft } : {}),
        },
        result: null,
        error: null,
        createdBy: actor.id,
        startedAt: null,
        finishedAt: null,
      },
      { transaction },
    );
    await recordAudit(
      { actorId: actor.id, action: 'backtest.request', entity: 'backtest_job', entityId: job.id, details: { ruleId, seriesId: sid, ...job.params } },
      transaction,
    );
    return job;
  });
}

/** Backtests, newest first, optionally of one rule and/or one series (by slug). */
export async function listBacktests(filter: { rule?: number; series?: string }): Promise<BacktestJobRecord[]> {
  await db();
  const where: Record<string, unknown> = {};
  if (filter.rule !== undefined) where.ruleId = filter.rule;
  if (filter.series !== undefined) where.seriesId = (await findSeriesBySlug(filter.series)).id;
  const rows = await BacktestJob.findAll({ where, order: [['id', 'DESC']], limit: 100 });
  return rows.map((job) => presentBacktestJob(job));
}

export async function findBacktest(id: number): Promise<BacktestJob> {
  await db();
  const job = await BacktestJob.findByPk(id);
  if (!job) throw new NotFoundError('Backtest');
  return job;
}

/** A queued job is cancelled at once; a running one is asked to stop and stops at its next progress check. */
export async function cancelBacktest(id: number, actor: Pick<Actor, 'id'>): Promise<BacktestJob> {
  return writeTransaction(async (transaction) => {
    const job = await BacktestJob.findByPk(id, { transaction });
    if (!job) throw new NotFoundError('Backtest');
    if (job.status !== 'queued' && job.status !== 'running') throw new ConflictError(`This backtest has already ${job.status}.`);
    if (job.status === 'queued') await job.update({ status: 'cancelled', cancelRequested: true, finishedAt: new Date() }, { transaction });
    else await job.update({ cancelRequested: true }, { transaction });
    await recordAudit({ actorId: actor.id, action: 'backtest.cancel', entity: 'backtest_job', entityId: id, details: { status: job.status } }, transaction);
    return job;
  });
}

/** Saves a tau threshold (picked from a calibration's ROC) into the rule, with the ROC point it came from in the audit entry. */
export async function saveRuleThreshold(
  ruleId: number,
  input: { threshold: number; jobId: number | null; reason?: string },
  actor: Pick<Actor, 'id'>,
): Promise<AlertRule> {
  return writeTransaction(async (transaction) => {
    const rule = await AlertRule.findByPk(ruleId, { transaction });
    if (!rule) throw new NotFoundError('Rule');
    let rocPoint: unknown = null;
    if (input.jobId !== null) {
      const job = await BacktestJob.findByPk(input.jobId, { transaction });
      if (!job || job.ruleId !== ruleId) throw new UnprocessableError('That backtest is not of this rule.', { jobId: ['not a backtest of this rule'] });
      const roc = (job.result as BacktestResult | null)?.calibration?.roc ?? [];
      rocPoint = roc.find((p) => Math.abs(p.threshold - input.threshold) < 1e-12) ?? null;
    }
    const before = rule.minTau;
    await rule.update({ minTau: input.threshold }, { transaction });
    await recordAudit(
      {
        actorId: actor.id,
        action: 'rule.threshold',
        entity: 'alert_rule',
        entityId: ruleId,
        details: { before, after: input.threshold, jobId: input.jobId, rocPoint, reason: input.reason ?? null },
      },
      transaction,
    );
    return rule;
  });
}

/**
 * Claims the oldest queued backtest and runs it to the end: progress (0..1) is written every half second, a
 * cancel request stops the work within about that time, and the result or error is stored. Returns the job
 * id, or null when none was queued. The caller holds the scheduler lease (jobs/backtest.ts).
 */
export async function runNextBacktest(options: { threads?: number } = {}): Promise<number | null> {
  await db();
  const next = await BacktestJob.findOne({ where: { status: 'queued' }, order: [['id', 'ASC']] });
  if (!next) return null;
  const [claimed] = await BacktestJob.update({ status: 'running', startedAt: new Date() }, { where: { id: next.id, status: 'queued' } });
  if (claimed === 0) return next.id;
  const job = (await BacktestJob.findByPk(next.id))!;
  const controller = new AbortController();
  let lastWrite = 0;
  let pending: Promise<unknown> = Promise.resolve();
  const onProgress = (fraction: number) => {
    const now = Date.now();
    if (now - lastWrite < PROGRESS_EVERY_MS) return;
    lastWrite = now;
    pending = pending
      .then(async () => {
        await BacktestJob.update({ progress: Math.min(0.99, fraction) }, { where: { id: job.id } });
        const fresh = await BacktestJob.findByPk(job.id, { attributes: ['cancelRequested'] });
        if (fresh?.cancelRequested) controller.abort();
      })
      .catch(() => undefined);
  };
  try {
    const [rule, series] = await Promise.all([AlertRule.findByPk(job.ruleId), Series.findByPk(job.seriesId)]);
    if (!rule || !series) throw new UnprocessableError('The rule or series of this backtest no longer exists.');
    const params = job.params as {
      every?: number;
      horizonDays?: number | null;
      calibration?: { surrogates: number; method: 'ar1' | 'phase'; approaches?: number; budget?: number } | null;
      draft?: RuleFields;
    };
    const replayRule = replayRuleOf(params.draft ?? rule);
    const settings = analysisSettingsSchema.parse(series.settings);
    const { time, value } = await loadObservations(series.id);
    // Both kinds of mark restart the replayed stretch; only tipping points are warned of (and scored).
    const marks = await listMarks(series.id, ['tipping-point', 'maintenance']);
    const tippingPoints = marks.filter((m) => m.kind !== 'maintenance');
    const result = await runBacktest(
      {
        time,
        value,
        intervalMs: series.intervalMs === null ? undefined : Number(series.intervalMs),
        settings,
        rule: replayRule,
        tippingPoints: tippingPoints.map((t) => ({ id: t.id, at: t.at, note: t.note })),
        breaks: marks.filter((m) => m.kind === 'maintenance').map((m) => ({ at: m.at })),
        every: params.every ?? 1,
        horizonMs: params.horizonDays ? params.horizonDays * DAY_MS : null,
        calibration: params.calibration ?? null,
      },
      { onProgress, signal: controller.signal, threads: options.threads },
    );
    await pending;
    const fresh = await BacktestJob.findByPk(job.id, { attributes: ['cancelRequested'] });
    if (fresh?.cancelRequested) throw new CancelledError();
    // the rule as replayed is kept with the result, so a later change of the rule makes its calibration stale
    await BacktestJob.update(
      { status: 'succeeded', progress: 1, result: JSON.parse(JSON.stringify({ ...result, rule: replayRule, settings })), finishedAt: new Date() },
      { where: { id: job.id } },
    );
  } catch (error) {
    await pending;
    const cancelled = error instanceof CancelledError;
    if (!cancelled && !(error instanceof Error && error.name === 'AnalysisInputError') && !(error instanceof UnprocessableError)) {
      console.error('[brinkwatch] backtest failed', error);
    }
    await BacktestJob.update(
      { status: cancelled ? 'cancelled' : 'failed', error: cancelled ? null : error instanceof Error ? error.message : String(error), finishedAt: new Date() },
      { where: { id: job.id } },
    );
  }
  return job.id;
}

/** Jobs left running by a scheduler that died go back to the queue (called once the lease is held). */
export async function requeueAbandonedBacktests(): Promise<number> {
  await db();
  const [count] = await BacktestJob.update({ status: 'queued', startedAt: null }, { where: { status: 'running', cancelRequested: { [Op.not]: true } } });
  await BacktestJob.update({ status: 'cancelled', finishedAt: new Date() }, { where: { status: 'running', cancelRequested: true } });
  return count;
}

/**
 * Queues the calibration of a rule on its own series with the live defaults (RULE_CALIBRATION): the full live
 * procedure replayed on surrogates of the series' record before the first tipping point, giving false alarms per year of
 * judged time. Calibrations of the same rule still waiting in the queue are cancelled (only the newest rule
 * matters). Null for a default rule (no series of its own). Called by the rule routes on create and update.
 */
export async function queueRuleCalibration(ruleId: number, actor: { id: number } | null, transaction?: Transaction): Promise<BacktestJob | null> {
  const work = async (t: Transaction): Promise<BacktestJob | null> => {
    const rule = await AlertRule.findByPk(ruleId, { transaction: t });
    if (!rule) throw new NotFoundError('Rule');
    if (rule.seriesId === null) return null;
    const waiting = await BacktestJob.findAll({ where: { ruleId, kind: 'calibration', status: 'queued' }, transaction: t });
    for (const old of waiting) {
      if ((old.params as { ruleCalibration?: boolean }).ruleCalibration)
        await old.update({ status: 'cancelled', cancelRequested: true, finishedAt: new Date() }, { transaction: t });
    }
    const job = await BacktestJob.create(
      {
        ruleId,
        seriesId: rule.seriesId,
        kind: 'calibration',
        params: { ...RULE_CALIBRATION, ruleCalibration: true },
        result: null,
        error: null,
        createdBy: actor?.id ?? null,
        startedAt: null,
        finishedAt: null,
      },
      { transaction: t },
    );
    await recordAudit(
      { actorId: actor?.id ?? null, action: 'rule.calibration.queue', entity: 'backtest_job', entityId: job.id, details: { ruleId, seriesId: rule.seriesId } },
      t,
    );
    return job;
  };
  if (transaction) return work(transaction);
  await db();
  return writeTransaction(work);
}

/** The latest calibration of a rule, as a rule, its alerts and its mails show it. */
export interface RuleCalibration {
  jobId: number;
  finishedAt: string;
  falseAlarmsPerYear: number | null;
  interval: [number, number] | null;
  surrogates: number;
}

/**
 * The newest finished own calibration (queueRuleCalibration) of each rule that still matches the rule as it is
 * now (same indicator, direction, thresholds, persistence and quiet period) and its series' analysis settings.
 * Rules with none are absent from the map (a changed rule or series waits for its next calibration).
 */
export async function latestRuleCalibration(ruleIds: number[]): Promise<Map<number, RuleCalibration>> {
  const out = new Map<number, RuleCalibration>();
  if (!ruleIds.length) return out;
  await db();
  const [rules, jobs] = await Promise.all([
    AlertRule.findAll({ where: { id: { [Op.in]: ruleIds } } }),
    BacktestJob.findAll({ where: { ruleId: { [Op.in]: ruleIds }, kind: 'calibration', status: 'succeeded' }, order: [['id', 'DESC']] }),
  ]);
  const current = new Map(rules.map((r) => [r.id, replayRuleOf(r)]));
  const seriesIds = [...new Set(jobs.map((j) => j.seriesId))];
  const settingsOf = new Map(
    (await Series.findAll({ where: { id: { [Op.in]: seriesIds } }, attributes: ['id', 'settings'] })).map((x) => [
      x.id,
      JSON.stringify(analysisSettingsSchema.parse(x.settings)),
    ]),
  );
  for (const job of jobs) {
    if (out.has(job.ruleId) || !(job.params as { ruleCalibration?: boolean }).ruleCalibration) continue;
    const result = job.result as (BacktestResult & { rule?: ReplayRule; settings?: unknown }) | null;
    const rule = current.get(job.ruleId);
    if (!rule || !result?.calibration || !sameRule(rule, result.rule)) continue;
    if (JSON.stringify(result.settings) !== settingsOf.get(job.seriesId)) continue;
    out.set(job.ruleId, {
      jobId: job.id,
      finishedAt: (job.finishedAt ?? job.updatedAt).toISOString(),
      falseAlarmsPerYear: result.calibration.falseAlarmsPerYear,
      interval: result.calibration.falseAlarmsPerYearInterval ?? null,
      surrogates: result.calibration.surrogates,
    });
  }
  return out;
}
