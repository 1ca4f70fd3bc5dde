import { Op, QueryTypes } from 'sequelize';
import { Alert, AlertEvent, Series, db, writeTransaction, OPEN_ALERT_STATES } from '@/models';
import { recordAudit } from '@/lib/audit';
import { createAlert } from './open';
import { enqueueWebhookEvent } from '@/lib/webhooks/outbox';
import { dataLatePayload } from '@/lib/webhooks/payloads';
import { dataBackMail, dataLateMail } from '@/lib/mail/templates';
import { mailAlertWatchers } from '@/lib/mail/watches';

/** How many sampling intervals may pass without new data before a series counts as late (common practice for loggers: one missed delivery is noise, three is a silence). */
export const LATE_AFTER_INTERVALS = 3;
/** For series without a fixed interval (irregular records), late after two days without data. */
export const LATE_AFTER_MS_IRREGULAR = 2 * 86_400_000;
export type Freshness = 'fresh' | 'late' | 'no-data';

/**
 * The one definition of lateness, used by the overview's status and by the data-late alerts: a series' own
 * setting (`series.late_after_ms`) when a lead gave one, else LATE_AFTER_INTERVALS sampling intervals, else
 * (irregular record) LATE_AFTER_MS_IRREGULAR. O(1).
 */
export function lateAfterMs(intervalMs: number | null, setting: number | null = null): number {
  if (setting !== null && setting > 0) return setting;
  return intervalMs ? LATE_AFTER_INTERVALS * intervalMs : LATE_AFTER_MS_IRREGULAR;
}

/** Late when the last observation is older than `lateAfterMs` at `now`; 'no-data' before the first observation. O(1). */
export function freshnessOf(lastDataAt: number | null, intervalMs: number | null, now: number, setting: number | null = null): Freshness {
  if (lastDataAt === null) return 'no-data';
  return now - lastDataAt > lateAfterMs(intervalMs, setting) ? 'late' : 'fresh';
}

export interface FreshnessReport {
  /** data-late alerts opened in this pass */
  opened: number[];
  /** data-late alerts whose series delivered again (closed when still open) */
  returned: number[];
  /** late series without any analysis yet: nothing to hang an alert on (see checkFreshness) */
  unanalysed: number[];
}

interface FreshnessRow {
  id: number;
  interval_ms: number | null;
  late_after_ms: number | null;
  last_t: number | null;
  snapshot_id: number | null;
  silent_alert_id: number | null;
}

/**
 * One pass of the freshness watch over every live series, at `now` (epoch ms):
 *
 * - a late series (freshnessOf) with no data-late alert still waiting for its data opens one (kind 'data-late',
 *   no rule, severity 'warning', `data_last_at` = its last observation), with a timeline event, an audit entry and
 *   mail to its watchers with immediate mail (digest readers find it in their digest), in one transaction;
 * - a series that is fresh again closes its waiting data-late alert by itself: `data_back_at` = the first
 *   observation after the silence, the alert dismissed ('data-gap-or-artefact') if nobody decided it yet, and a
 *   timeline event saying that the data returned; its watchers hear of it.
 *
 * A silence gives one alert: an analyst who dismisses it while the series is still silent is not asked again until
 * data return and stop anew (the unique index on series and `data_last_at` also keeps a second scheduler from
 * opening a twin). An alert points at an analysis snapshot (the schema asks for one), so the series' latest
 * snapshot is taken — the analysis as it stood when the data stopped; a series never analysed (which the analysis
 * job does within minutes of its first data) is reported as `unanalysed` and alerted on the next pass after that.
 * One grouped query, then one transaction per series that changes.
 */
export async function checkFreshness(now = Date.now()): Promise<FreshnessReport> {
  const sequelize = await db();
  const rows = await sequelize.query<FreshnessRow>(
    `SELECT s.id, s.interval_ms, s.late_after_ms,
       (SELECT MAX(t) FROM observations o WHERE o.series_id = s.id) AS last_t,
       (SELECT MAX(id) FROM analysis_snapshots x WHERE x.series_id = s.id) AS snapshot_id,
       (SELECT MAX(id) FROM alerts a WHERE a.series_id = s.id AND a.kind = 'data-late' AND a.data_back_at IS NULL) AS silent_alert_id
     FROM series s WHERE s.retired_at IS NULL ORDER BY s.id`,
    { type: QueryTypes.SELECT },
  );
  const report: FreshnessReport = { opened: [], returned: [], unanalysed: [] };
  for (const row of rows) {
    const lastT = row.last_t === null ? null : Number(row.last_t);
    const freshness = freshnessOf(
      lastT,
      row.interval_ms === null ? null : Number(row.interval_ms),
      now,
      row.late_after_ms === null ? null : Number(row.late_after_ms),
    );
    if (freshness === 'late' && row.silent_alert_id === null) {
      if (row.snapshot_id === null) report.unanalysed.push(row.id);
      else {
        const opened = await openLateAlert(row.id, lastT!, Number(row.snapshot_id), now);
        if (opened !== null) report.opened.push(opened);
      }
    } else if (freshness === 'fresh' && row.silent_alert_id !== null) {
      if (await closeReturned(Number(row.silent_alert_id), now)) report.returned.push(Number(row.silent_alert_id));
    }
  }
  return report;
}

async function openLateAlert(seriesId: number, lastDataAt: number, snapshotId: number, now: number): Promise<number | null> {
  return writeTransaction(async (transaction) => {
    // Re-read inside the write lock: another scheduler may have opened it since the pass's query.
    const waiting = await Alert.findOne({
      where: { seriesId, kind: 'data-late', [Op.or]: [{ dataBackAt: null }, { dataLastAt: lastDataAt }] },
      attributes: ['id'],
      transaction,
    });
    if (waiting) return null;
    const series = (await Series.findByPk(seriesId, { transaction }))!;
    const allowed = lateAfterMs(series.intervalMs, series.lateAfterMs);
    const alert = await createAlert(
      {
        fields: {
          seriesId,
          ruleId: null,
          kind: 'data-late',
          dataLastAt: lastDataAt,
          dataBackAt: null,
          severity: 'warning',
          firstSnapshotId: snapshotId,
          latestSnapshotId: snapshotId,
          peakTau: null,
        },
        detail: `No data since ${new Date(lastDataAt).toISOString()}; the series is late after ${Math.round(allowed / 60_000)} min without data.`,
        audit: { seriesId, kind: 'data-late', lastDataAt, lateAfterMs: allowed, checkedAt: now },
      },
      transaction,
    );
    await mailAlertWatchers(alert, dataLateMail({ alertId: alert.id, series, lastDataAt, lateAfterMs: allowed, now }), 'alert-data-late', transaction);
    await enqueueWebhookEvent(
      'data.late',
      dataLatePayload({ alertId: alert.id, lastDataAt, lateAfterMs: allowed }, { slug: series.slug, name: series.name, site: series.site }, new Date(now)),
      transaction,
    );
    return alert.id;
  });
}

async function closeReturned(alertId: number, now: number): Promise<boolean> {
  return writeTransaction(async (transaction) => {
    const alert = await Alert.findByPk(alertId, { transaction });
    if (!alert || alert.dataBackAt !== null || alert.dataLastAt === null) return false;
    const [first] = await alert.sequelize.query<{ t: number | null }>('SELECT MIN(t) AS t FROM observations WHERE series_id = :seriesId AND t > :after', {
      replacements: { seriesId: alert.seriesId, after: alert.dataLastAt },
      type: QueryTypes.SELECT,
      transaction,
    });
    if (first?.t === null || first?.t === undefined) return false;
    const backAt = Number(first.t);
    const fromState = alert.state;
    const open = OPEN_ALERT_STATES.includes(fromState);
    await alert.update(
      open
        ? { dataBackAt: backAt, state: 'dismissed', dismissReason: 'data-gap-or-artefact', closedAt: new Date(now), version: alert.version + 1 }
        : { dataBackAt: backAt },
      { transaction },
    );
    const detail = `Data returned: first new observation at ${new Date(backAt).toISOString()} after the last at ${new Date(alert.dataLastAt).toISOString()}.${open ? ' The alert closed by itself.' : ''}`;
    await AlertEvent.create(
      { alertId, actorId: null, action: 'data-returned', fromState, toState: alert.state, reason: open ? 'data-gap-or-artefact' : null, detail },
      { transaction },
    );
    await recordAudit(
      {
        actorId: null,
        action: 'alert.data-returned',
        entity: 'alert',
        entityId: alertId,
        details: { seriesId: alert.seriesId, dataLastAt: alert.dataLastAt, dataBackAt: backAt, closed: open, checkedAt: now },
      },
      transaction,
    );
    // a data-late alert is always on a series
    const series = (await Series.findByPk(alert.seriesId!, { transaction }))!;
    await mailAlertWatchers(alert, dataBackMail({ alertId, series, lastDataAt: alert.dataLastAt, backAt }), 'alert-data-back', transaction);
    return true;
  });
}
