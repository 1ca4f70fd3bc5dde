import { QueryTypes } from 'sequelize';
import { Alert, OPEN_ALERT_STATES, Site, db } from '@/models';
import type { AlertKind } from '@/models/Alert';
import { fetchSeriesOverview, type OverviewRow, type SiteAlertGroup } from '@/lib/overview';
import { cachedRead } from '@/lib/db/read-cache';
import { isoFromSqlDate } from '@/lib/db/sql-date';
import type { SiteRecord } from '@/lib/schemas/site';
import { findSiteBySlug, presentSite } from './registry';
import { siteRuleStatuses, type SiteRuleStatus } from '@/lib/alerts/site-rules';

export interface SiteAlert {
  id: number;
  state: string;
  severity: string;
  kind: AlertKind;
  indicator: string | null;
  /** null for an alert on the site's series together (a rule on site-level indicators) */
  series: { slug: string; name: string; timeZone: string } | null;
  createdAt: string;
}

export interface SitePage {
  site: SiteRecord;
  /** the site's active series as the overview shows them (state, latest data and its freshness, trends) */
  series: OverviewRow[];
  openAlerts: SiteAlert[];
  /** the rules on the site-level indicators, each with its latest judgement */
  siteRules: SiteRuleStatus[];
  generatedAt: number;
}

/** Open alerts shown on a site page at most; the alerts screen, filtered by series, has the rest. */
const SITE_ALERTS_SHOWN = 50;
const OPEN = OPEN_ALERT_STATES.map((state) => `'${state}'`).join(',');

async function openAlertsOfSite(siteId: number): Promise<SiteAlert[]> {
  return cachedRead(`site-alerts:${siteId}`, async () => {
    const sequelize = await db();
    const rows = await sequelize.query<{
      id: number;
      state: string;
      severity: string;
      kind: string | null;
      indicator: string | null;
      slug: string | null;
      name: string | null;
      time_zone: string | null;
      created_at: string;
    }>(
      `SELECT a.id, a.state, a.severity, a.kind, r.indicator, s.slug, s.name, s.time_zone, a.created_at
       FROM alerts a LEFT JOIN series s ON s.id = a.series_id LEFT JOIN alert_rules r ON r.id = a.rule_id
       WHERE (s.site_id = :siteId AND s.retired_at IS NULL OR a.site_id = :siteId) AND a.state IN (${OPEN})
       ORDER BY CASE a.severity WHEN 'warning' THEN 0 ELSE 1 END, a.created_at DESC, a.id DESC LIMIT :limit`,
      { type: QueryTypes.SELECT, replacements: { siteId, limit: SITE_ALERTS_SHOWN } },
    );
    return rows.map((r) => ({
      id: Number(r.id),
      state: r.state,
      severity: r.severity,
      kind: (r.kind ?? 'slowing-down') as AlertKind,
      indicator: r.indicator,
      series: r.slug === null ? null : { slug: r.slug, name: r.name!, timeZone: r.time_zone! },
      createdAt: isoFromSqlDate(r.created_at),
    }));
  });
}

/**
 * A site with its series and open alerts. The series rows are the overview's own (one cached read for the whole
 * network, filtered here), so state and freshness read the same on both screens. 404 for an unknown slug.
 */
export async function fetchSitePage(slug: string, actorId: number | null, now = Date.now()): Promise<SitePage> {
  const site = await findSiteBySlug(slug);
  const [overview, openAlerts, siteRules] = await Promise.all([fetchSeriesOverview(actorId, now), openAlertsOfSite(site.id), siteRuleStatuses(site.id)]);
  const series = overview.rows.filter((row) => row.siteSlug === site.slug);
  return { site: presentSite(site, series.length), series, openAlerts, siteRules, generatedAt: now };
}

/**
 * The site a series belongs to, as the series page names it: its slug and name, and the alerts open on the site's
 * site-level indicators, counted as the overview counts them. Null for a series without a site. Two small lookups.
 */
export async function siteOfSeries(siteId: number | null): Promise<{ slug: string; name: string; openSiteAlerts: SiteAlertGroup | null } | null> {
  if (siteId === null) return null;
  const [site, open] = await Promise.all([
    Site.findByPk(siteId, { attributes: ['slug', 'name'] }),
    Alert.findAll({ where: { siteId, seriesId: null, state: [...OPEN_ALERT_STATES] }, attributes: ['severity'] }),
  ]);
  if (!site) return null;
  const openSiteAlerts: SiteAlertGroup | null = open.length
    ? { site: site.name, siteSlug: site.slug, count: open.length, severity: open.some((a) => a.severity === 'warning') ? 'warning' : 'watch' }
    : null;
  return { slug: site.slug, name: site.name, openSiteAlerts };
}
