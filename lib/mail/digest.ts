import { Op } from 'sequelize';
import { Alert, AlertRule, MailMessage, RuleEvaluation, Series, Site, SiteRuleEvaluation, User, Watch, db, writeTransaction } from '@/models';
import { enqueueMail } from './outbox';
import { digestMail, type DigestEntry } from './templates';

const DAY_MS = 86_400_000;

/**
 * Queues one digest per user who follows some series by digest and has news: alerts opened or decided on those
 * series since that user's previous digest (or the last 24 hours). Keyed by user and UTC day, so a second run on
 * the same day (another scheduler, a restart) queues nothing new. Returns the number of digests queued.
 */
export async function enqueueDigests(now = new Date()): Promise<number> {
  await db();
  const watches = await Watch.findAll({ where: { mode: 'digest' }, attributes: ['userId', 'seriesId'] });
  const byUser = new Map<number, number[]>();
  for (const w of watches) byUser.set(w.userId, [...(byUser.get(w.userId) ?? []), w.seriesId]);
  const day = now.toISOString().slice(0, 10);
  let queued = 0;
  for (const [userId, seriesIds] of byUser) {
    const user = await User.findByPk(userId);
    if (!user || !user.active) continue;
    const previous = await MailMessage.findOne({ where: { kind: 'digest', dedupeKey: { [Op.like]: `digest:${userId}:%` } }, order: [['id', 'DESC']] });
    const since = previous ? previous.createdAt : new Date(now.getTime() - DAY_MS);
    // Site alerts reach the people who follow any series of the site.
    const siteIds = [...new Set((await Series.findAll({ where: { id: { [Op.in]: seriesIds } }, attributes: ['siteId'] })).map((s) => s.siteId))].filter(
      (id): id is number => id !== null,
    );
    const alerts = await Alert.findAll({
      where: {
        [Op.and]: [
          { [Op.or]: [{ seriesId: { [Op.in]: seriesIds } }, { siteId: { [Op.in]: siteIds } }] },
          { [Op.or]: [{ createdAt: { [Op.gt]: since } }, { closedAt: { [Op.gt]: since } }] },
        ],
      },
      include: [
        { model: Series, as: 'series', attributes: ['name'] },
        { model: Site, as: 'site', attributes: ['name'] },
        { model: AlertRule, as: 'rule', attributes: ['indicator', 'direction'] },
      ],
      order: [['id', 'ASC']],
      limit: 200,
    });
    if (!alerts.length) continue;
    const entries: DigestEntry[] = [];
    for (const alert of alerts) {
      const onSite = alert.kind === 'site-slowing-down';
      const evaluation =
        alert.ruleId === null
          ? null
          : onSite
            ? await SiteRuleEvaluation.findOne({ where: { ruleId: alert.ruleId, siteSnapshotId: alert.latestSnapshotId } })
            : await RuleEvaluation.findOne({ where: { ruleId: alert.ruleId, snapshotId: alert.latestSnapshotId } });
      const joined = alert as Alert & { series?: Series | null; site?: Site | null; rule?: AlertRule };
      entries.push({
        alertId: alert.id,
        seriesName: joined.series?.name ?? (joined.site ? `site ${joined.site.name}` : `alert ${alert.id}`),
        kind: alert.kind,
        indicator: alert.kind === 'slowing-down' || onSite ? (joined.rule?.indicator ?? '') : null,
        direction: evaluation?.direction ?? joined.rule?.direction ?? null,
        severity: alert.severity,
        state: alert.state,
        tau: evaluation?.tau ?? null,
        surrogateP: evaluation?.surrogateP ?? null,
        openedAt: alert.createdAt,
      });
    }
    const mail = digestMail({ name: user.name, since, entries });
    const added = await writeTransaction((transaction) =>
      enqueueMail({ kind: 'digest', dedupeKey: `digest:${userId}:${day}`, to: user.email, ...mail }, transaction),
    );
    if (added) queued++;
  }
  return queued;
}
