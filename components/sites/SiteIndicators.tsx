'use client';

import Link from 'next/link';
import { useMemo } from 'react';
import { useQuery } from '@tanstack/react-query';
import { api } from '@/components/api';
import { ChartFrame } from '@/components/charts/ChartFrame';
import { TimeChart } from '@/components/charts/TimeChart';
import { LocalTime } from '@/components/LocalTime';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { CELL, DataTable } from '@/components/ui/DataTable';
import { formatTauDirection, indicatorLabel } from '@/lib/display/analysis-labels';
import { formatAge, formatP, formatValue } from '@/lib/display/format';
import { SITE_INDICATORS } from '@/lib/engine/site';
import type { SiteAnalysisView } from '@/lib/sites/analysis-shape';

/** Chart rows { t, <site indicator>: value | null } of a site snapshot's curves. O(points). */
function siteRows(curves: NonNullable<SiteAnalysisView['curves']>): Record<string, number | null>[] {
  return curves.time.map((t, i) => {
    const row: Record<string, number | null> = { t };
    for (const d of SITE_INDICATORS) row[d.name] = curves.indicators[d.name]?.[i] ?? null;
    return row;
  });
}

/**
 * The site-level indicators of a site (its series together, on one grid): each one's Kendall tau with the
 * direction it is tested in and its phase-coherent surrogate p, then one chart per indicator. The scheduler
 * computes them after the member series are analysed; this only reads the latest result (kept fresh by polling).
 */
export function SiteIndicators({ slug, timeZone, initial }: { slug: string; timeZone: string; initial: SiteAnalysisView }) {
  const query = useQuery({
    queryKey: ['site-analysis', slug],
    queryFn: ({ signal }) => api<SiteAnalysisView>(`/api/sites/${slug}/analysis`, { signal }),
    initialData: initial,
    refetchInterval: 60_000,
  });
  if (query.isPending) return <Loading label="Loading the site-level indicators…" />;
  if (query.isError) return <ErrorNote error={query.error}>The site-level indicators could not be loaded.</ErrorNote>;
  return <SiteIndicatorsView slug={slug} timeZone={timeZone} view={query.data} />;
}

/**
 * One site-level snapshot as a table and charts: the live one on the site page, or the one a site alert rests on
 * (then `only` names the rule's indicator, whose chart alone is drawn).
 */
export function SiteIndicatorsView({ slug, timeZone, view, only }: { slug: string; timeZone: string; view: SiteAnalysisView; only?: string }) {
  const curves = view.curves;
  const rows = useMemo(() => (curves ? siteRows(curves) : []), [curves]);
  const leftOut = view.members.leftOut.length ? (
    <p className="text-xs text-ink-soft" data-testid="site-left-out">
      Left out:{' '}
      {view.members.leftOut.map((m, i) => (
        <span key={m.seriesId}>
          {i ? '; ' : ''}
          <Link href={`/series/${m.slug}`} className="hover:underline">
            {m.name}
          </Link>{' '}
          ({m.reason})
        </span>
      ))}
      .
    </p>
  ) : null;
  if (view.state === 'none')
    return (
      <Empty>
        Not computed yet. The scheduler computes these once the site has at least two active series with a declared interval and each has been analysed.
      </Empty>
    );
  if (view.state === 'error' || !view.summary || !view.curves)
    return (
      <div className="space-y-2" data-testid="site-indicators-error">
        <ErrorNote>The site-level indicators could not be computed: {view.error ?? 'no result was stored'}.</ErrorNote>
        {leftOut}
      </div>
    );
  const { summary } = view;
  const stride = summary.evaluatedEvery > 1 ? `, one window in ${summary.evaluatedEvery} evaluated` : '';
  return (
    <div className="space-y-3" data-testid="site-indicators">
      <p className="text-sm text-ink-soft">
        {view.members.used.map((m) => m.name).join(', ')} on one grid with a step of {formatAge(summary.interval)} (the coarsest interval): {summary.n} instants
        {view.dataFrom !== null && view.dataTo !== null ? (
          <>
            {' '}
            from <LocalTime t={view.dataFrom} timeZone={timeZone} /> to <LocalTime t={view.dataTo} timeZone={timeZone} />
          </>
        ) : null}
        , each detrended as its own settings say; windows of {summary.windowPoints} instants{stride}. Computed{' '}
        <LocalTime t={view.computedAt!} timeZone={timeZone} withZone />.
      </p>
      {leftOut}
      <DataTable
        caption="Site-level indicators"
        frame="plain"
        testId="site-indicator-table"
        columns={['Indicator', 'Latest', 'Trend (Kendall τ)', 'Surrogate p']}
      >
        {SITE_INDICATORS.map((d) => {
          const k = summary.kendall[d.name];
          const s = summary.significance[d.name];
          return (
            <tr key={d.name} data-testid={`site-row-${d.name}`}>
              <td className={CELL}>{indicatorLabel(d.name, 'title')}</td>
              <td className={`${CELL} num`}>{formatValue(summary.latest[d.name])}</td>
              <td className={CELL}>{formatTauDirection(k?.tau, k?.direction ?? d.direction)}</td>
              <td className={`${CELL} num`}>{s ? `${formatP(s.p)} (${s.count} phase surrogates)` : 'no surrogates'}</td>
            </tr>
          );
        })}
      </DataTable>
      {SITE_INDICATORS.filter((d) => !only || d.name === only).map((d) => (
        <ChartFrame
          key={d.name}
          title={`${indicatorLabel(d.name, 'title')} across the site's series`}
          fileName={`${slug}-${d.name}`}
          testId={`site-chart-${d.name}`}
          legend={formatTauDirection(summary.kendall[d.name]?.tau, summary.kendall[d.name]?.direction ?? d.direction)}
        >
          <TimeChart
            rows={rows}
            timeZone={timeZone}
            height={150}
            lines={[
              {
                key: d.name,
                label: `${indicatorLabel(d.name)} (window of ${summary.windowPoints} instants${stride})`,
                color: 'tide',
                width: 2,
                sparse: summary.evaluatedEvery > 1,
              },
            ]}
          />
        </ChartFrame>
      ))}
    </div>
  );
}
