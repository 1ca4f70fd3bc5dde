import crypto from 'node:crypto';
import { jsonElements } from '@/lib/db/dialect';
import { QueryTypes } from 'sequelize';
import { ReportSchedule, db, writeTransaction } from '@/models';
import type { ReportCadence } from '@/models/ReportSchedule';
import { recordAudit } from '@/lib/audit';
import type { Actor } from '@/lib/auth/roles';
import { NotFoundError, UnprocessableError } from '@/lib/http/errors';
import { enqueueMail } from '@/lib/mail/outbox';
import { periodReportMail } from '@/lib/mail/templates';
import { publicBaseUrl } from '@/lib/runtime/config';
import { ensureAuthSecret } from '@/lib/runtime/secret';
import { formatUtc } from '@/lib/display/format';
import { reportScheduleSchema, reportScheduleUpdateSchema, type ReportScheduleInput, type ReportScheduleUpdate } from '@/lib/schemas/report';
import { buildPeriodReport } from './period';
import type { ReportScheduleView } from './schedules-view';
import { periodBounds, previousPeriod, type PeriodKind, type PeriodReport } from './period-shape';

const CADENCE_PERIOD: Record<ReportCadence, PeriodKind> = { monthly: 'month', quarterly: 'quarter' };

export function presentSchedule(s: ReportSchedule): ReportScheduleView {
  return {
    id: s.id,
    name: s.name,
    site: s.site,
    cadence: s.cadence,
    recipients: s.recipients,
    active: s.active,
    createdAt: s.createdAt.toISOString(),
    updatedAt: s.updatedAt.toISOString(),
  };
}

export async function listSchedules(): Promise<ReportScheduleView[]> {
  await db();
  return (
    await ReportSchedule.findAll({
      order: [
        ['name', 'ASC'],
        ['id', 'ASC'],
      ],
    })
  ).map(presentSchedule);
}

export async function createSchedule(input: ReportScheduleInput, actor: Pick<Actor, 'id'>): Promise<ReportScheduleView> {
  const fields = reportScheduleSchema.parse(input);
  return writeTransaction(async (transaction) => {
    const schedule = await ReportSchedule.create({ ...fields, createdBy: actor.id }, { transaction });
    await recordAudit({ actorId: actor.id, action: 'report-schedule.create', entity: 'report_schedule', entityId: schedule.id, details: fields }, transaction);
    return presentSchedule(schedule);
  });
}

export async function updateSchedule(id: number, input: ReportScheduleUpdate, actor: Pick<Actor, 'id'>): Promise<ReportScheduleView> {
  const changes = reportScheduleUpdateSchema.parse(input);
  return writeTransaction(async (transaction) => {
    const schedule = await ReportSchedule.findByPk(id, { transaction });
    if (!schedule) throw new NotFoundError('Report schedule');
    const before = presentSchedule(schedule);
    await schedule.update(changes, { transaction });
    await recordAudit(
      { actorId: actor.id, action: 'report-schedule.update', entity: 'report_schedule', entityId: id, details: { before, changes } },
      transaction,
    );
    return presentSchedule(schedule);
  });
}

export async function deleteSchedule(id: number, actor: Pick<Actor, 'id'>): Promise<void> {
  await writeTransaction(async (transaction) => {
    const schedule = await ReportSchedule.findByPk(id, { transaction });
    if (!schedule) throw new NotFoundError('Report schedule');
    await schedule.destroy({ transaction });
    await recordAudit(
      {
        actorId: actor.id,
        action: 'report-schedule.delete',
        entity: 'report_schedule',
        entityId: id,
        details: presentSchedule(schedule) as unknown as Record<string, unknown>,
      },
      transaction,
    );
  });
}

/**
 * The unsubscribe token of one address on one schedule: base64url(JSON [scheduleId, address]) "." HMAC-SHA256 of
 * that part under the app's secret (the one that signs sessions). It needs no account and no database row, and it
 * cannot be forged for another address or schedule. It does not expire: an old report's link must still work.
 */
export function unsubscribeToken(scheduleId: number, address: string): string {
  const body = Buffer.from(JSON.stringify([scheduleId, address])).toString('base64url');
  return `${body}.${sign(body)}`;
}

function sign(body: string): string {
  return crypto.createHmac('sha256', ensureAuthSecret()).update(`report-unsubscribe:${body}`).digest('base64url');
}

/** The schedule and address a token names, or null when it is malformed or its signature does not match. */
export function readUnsubscribeToken(token: string): { scheduleId: number; address: string } | null {
  const [body, signature, extra] = token.split('.');
  if (!body || !signature || extra !== undefined) return null;
  const expected = Buffer.from(sign(body));
  const given = Buffer.from(signature);
  if (expected.length !== given.length || !crypto.timingSafeEqual(expected, given)) return null;
  try {
    const [scheduleId, address] = JSON.parse(Buffer.from(body, 'base64url').toString('utf8')) as [unknown, unknown];
    return Number.isInteger(scheduleId) && typeof address === 'string' ? { scheduleId: scheduleId as number, address } : null;
  } catch {
    return null;
  }
}

/** What the unsubscribe page shows before the click: which report and address (null for a bad link). */
export async function describeUnsubscribe(token: string): Promise<{ address: string; scheduleName: string | null; subscribed: boolean } | null> {
  const read = readUnsubscribeToken(token);
  if (!read) return null;
  await db();
  const schedule = await ReportSchedule.findByPk(read.scheduleId);
  return { address: read.address, scheduleName: schedule?.name ?? null, subscribed: !!schedule && schedule.recipients.includes(read.address) };
}

/** Takes the token's address off its schedule's list (audited; a second click, or a deleted schedule, is a no-op). */
export async function unsubscribe(token: string): Promise<{ address: string; removed: boolean }> {
  const read = readUnsubscribeToken(token);
  if (!read) throw new UnprocessableError('This unsubscribe link is not valid.', { token: ['Not a valid unsubscribe link.'] });
  return writeTransaction(async (transaction) => {
    const schedule = await ReportSchedule.findByPk(read.scheduleId, { transaction });
    if (!schedule || !schedule.recipients.includes(read.address)) return { address: read.address, removed: false };
    await schedule.update({ recipients: schedule.recipients.filter((r) => r !== read.address) }, { transaction });
    await recordAudit(
      { actorId: null, action: 'report-schedule.unsubscribe', entity: 'report_schedule', entityId: schedule.id, details: { address: read.address } },
      transaction,
    );
    return { address: read.address, removed: true };
  });
}

function dedupeKey(scheduleId: number, from: string, address: string): string {
  return `period-report:${scheduleId}:${from}:${address}`;
}

function reportLink(report: PeriodReport): string {
  const query = new URLSearchParams({ from: report.period.from, to: report.period.to, ...(report.site ? { site: report.site } : {}) });
  return `${publicBaseUrl()}/reports?${query}`;
}

const hoursText = (h: number | null) => (h === null ? '' : ` after ${h.toFixed(1)} h`);

/**
 * Enqueues every scheduled report that is due at `now`: for each active schedule, the last complete month or
 * quarter — when it ended after the schedule was made, so a new schedule waits for its first whole period — to each
 * recipient who has not had it (dedupe key per schedule, period and address; the outbox never takes a key twice,
 * so passes may repeat and several schedulers may run). The report is assembled only when someone still waits for
 * it. Returns the number of messages enqueued.
 */
export async function sendDueReports(now = Date.now()): Promise<number> {
  const sequelize = await db();
  const schedules = await ReportSchedule.findAll({ where: { active: true }, order: [['id', 'ASC']] });
  let enqueued = 0;
  for (const schedule of schedules) {
    const period = previousPeriod(CADENCE_PERIOD[schedule.cadence], now);
    if (periodBounds(period).end <= schedule.createdAt.getTime() || !schedule.recipients.length) continue;
    const keys = schedule.recipients.map((r) => dedupeKey(schedule.id, period.from, r));
    const sent = new Set(
      (
        await sequelize.query<{ dedupe_key: string }>(
          `SELECT dedupe_key FROM mail_outbox WHERE dedupe_key IN (SELECT k.value FROM ${jsonElements(sequelize, ':keys', 'k')})`,
          {
            replacements: { keys: JSON.stringify(keys) },
            type: QueryTypes.SELECT,
          },
        )
      ).map((r) => r.dedupe_key),
    );
    const waiting = schedule.recipients.filter((r) => !sent.has(dedupeKey(schedule.id, period.from, r)));
    if (!waiting.length) continue;
    const report = await buildPeriodReport(period, schedule.site || null, now);
    const facts = {
      scheduleName: schedule.name,
      scope: report.site ?? 'whole network',
      periodLabel: report.period.label,
      from: period.from,
      to: period.to,
      seriesCount: report.series.length,
      completeness: report.completeness.share,
      alertsOpened: report.decisions.opened,
      decided: report.decisions.decided,
      undecided: report.decisions.undecided,
      medianHoursToDecision: report.decisions.medianHoursToDecision,
      lateStretches: report.late.length,
      changes: report.changes.length,
      seriesLines: report.series.map((s): [string, string] => [
        s.name,
        `${s.completeness === null ? 'irregular record' : `${(s.completeness * 100).toFixed(1)} % complete`}, ${s.lateStretches} late stretch${s.lateStretches === 1 ? '' : 'es'}, ${s.alertsOpened} alert${s.alertsOpened === 1 ? '' : 's'} opened, now ${s.stateNow}`,
      ]),
      alertLines: report.alerts.map((a): [string, string] => [
        `#${a.id} ${a.seriesName}`,
        `${a.severity}, ${a.subject}, opened ${formatUtc(Date.parse(a.openedAt))}; ${a.decision ? `${a.decision}${hoursText(a.hoursToDecision)}${a.reason ? ` (${a.reason}${a.note ? `: ${a.note}` : ''})` : a.note ? ` (${a.note})` : ''}` : 'awaiting a decision'}`,
      ]),
      reportLink: reportLink(report),
    };
    await writeTransaction(async (transaction) => {
      // Re-read inside the write lock: an unsubscribe that landed since stops this message.
      const current = await ReportSchedule.findOne({ where: { id: schedule.id, active: true }, transaction });
      for (const address of waiting.filter((r) => current?.recipients.includes(r))) {
        const mail = periodReportMail({ ...facts, unsubscribeLink: `${publicBaseUrl()}/unsubscribe/${unsubscribeToken(schedule.id, address)}` });
        if (await enqueueMail({ kind: 'period-report', dedupeKey: dedupeKey(schedule.id, period.from, address), to: address, ...mail }, transaction))
          enqueued += 1;
      }
    });
  }
  return enqueued;
}
