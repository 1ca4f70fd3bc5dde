'use client';

import Link from 'next/link';
import { Fragment, useMemo, useState, type ReactNode } from 'react';
import { FreshnessBadge, StateBadge, STATE_LABELS } from '@/components/Badges';
import { LocalTime } from '@/components/LocalTime';
import { Empty } from '@/components/States';
import { Sparkline } from '@/components/charts/Sparkline';
import { Button } from '@/components/ui/Button';
import { DataTable } from '@/components/ui/DataTable';
import { CONTROL, Field } from '@/components/ui/Field';
import { formatDirection, indicatorLabel } from '@/lib/display/analysis-labels';
import { formatAge, formatP, formatTau } from '@/lib/display/format';
import type { OverviewRow, SeriesState, SiteAlertGroup } from '@/lib/overview';
import { SiteNameSelect } from '@/components/sites/SiteNameSelect';

type SortKey = 'name' | 'site' | 'lastData' | 'state' | 'tau';
const STATE_RANK: Record<SeriesState, number> = { alert: 4, warning: 3, watch: 2, quiet: 1, 'not-analysed': 0 };

/** The strongest trend of a row, each tau seen in its indicator's own direction (a falling recovery rate counts as rising ac1 does). */
function maxTau(row: OverviewRow): number {
  return Math.max(-2, ...row.indicators.map((i) => i.orientedTau ?? -2));
}

const SORTS: Record<SortKey, (a: OverviewRow, b: OverviewRow) => number> = {
  name: (a, b) => a.name.localeCompare(b.name),
  site: (a, b) => a.site.localeCompare(b.site) || a.name.localeCompare(b.name),
  lastData: (a, b) => (a.lastDataAt ?? 0) - (b.lastDataAt ?? 0),
  state: (a, b) => STATE_RANK[a.state] - STATE_RANK[b.state],
  tau: (a, b) => maxTau(a) - maxTau(b),
};

/**
 * Rows drawn at first, most pressing first (the default sort is by state): a network of hundreds of series would
 * otherwise open as a page of hundreds of rows. Search, filters and sorting still cover every series.
 */
const ROWS_PER_STEP = 100;

/** On time, late or no data, with how long since the last observation on hover. */
function RowFreshness({ row, now }: { row: OverviewRow; now: number }) {
  return <FreshnessBadge freshness={row.freshness} title={row.lastDataAt ? `${formatAge(now - row.lastDataAt)} since the last observation` : undefined} />;
}

/** Tau and p (and q where a false-discovery level applies) of each indicator a series' rules watch. */
function IndicatorTrends({ indicators }: { indicators: OverviewRow['indicators'] }) {
  if (indicators.length === 0) return <span className="text-ink-faint">–</span>;
  return (
    <ul className="space-y-0.5">
      {indicators.map((ind) => (
        <li key={ind.name} className="num whitespace-nowrap">
          <span className="inline-block w-20 text-ink-soft">{ind.name}</span>τ {formatTau(ind.tau)}
          <span className="ml-1 text-ink-soft" title={`tested ${formatDirection(ind.direction)}`}>
            {formatDirection(ind.direction).split(' ').pop()}
          </span>
          <span
            className="ml-2 text-ink-soft"
            title={
              ind.pKind === 'surrogate'
                ? `p from surrogate data, ${formatDirection(ind.direction)}`
                : 'p from the Kendall test: descriptive only, it assumes independent values'
            }
          >
            p {formatP(ind.p)}
            {ind.pKind === 'kendall' ? '*' : ''}
          </span>
          {ind.q !== null && (
            <span
              className="ml-2 text-ink-soft"
              title="Benjamini–Hochberg q-value: the surrogate p adjusted for every series judged in the same analysis cycle"
            >
              q {formatP(ind.q)}
            </span>
          )}
        </li>
      ))}
    </ul>
  );
}

/** The site cell: its name linked to its page, or a dash. */
function SiteName({ row }: { row: OverviewRow }) {
  if (!row.site) return <span className="text-ink-faint">–</span>;
  return row.siteSlug ? (
    <Link href={`/sites/${row.siteSlug}`} className="hover:underline">
      {row.site}
    </Link>
  ) : (
    <>{row.site}</>
  );
}

/** In a site's heading: how many alerts are open on its site-level indicators, linked to the site page. */
function SiteAlertNote({ group }: { group: SiteAlertGroup | undefined }) {
  if (!group) return null;
  return (
    <Link href={`/sites/${group.siteSlug}#site-indicators`} className="ml-2 text-xs font-normal text-warning hover:underline" data-testid="site-alert-note">
      · {group.count} site {group.count === 1 ? 'alert' : 'alerts'} open
    </Link>
  );
}

/**
 * The network's series, filtered, sorted and (with more than one site) optionally grouped by site: each group
 * under a heading row naming its site, in the chosen order within it. The site page shows its own rows here too.
 */
export function OverviewTable({
  rows,
  sites,
  siteAlerts = [],
  now,
  noSeries,
  siteColumn = true,
}: {
  rows: OverviewRow[];
  sites: string[];
  /** open site-level alerts, named in their site's heading when grouped */
  siteAlerts?: SiteAlertGroup[];
  now: number;
  /** what to say when there are no rows at all */
  noSeries?: ReactNode;
  /** false where every row has the same site (the site page) */
  siteColumn?: boolean;
}) {
  const [text, setText] = useState('');
  const [site, setSite] = useState('');
  const [grouped, setGrouped] = useState(false);
  const [state, setState] = useState('');
  const [sort, setSort] = useState<{ key: SortKey; desc: boolean }>({ key: 'state', desc: true });
  const [limit, setLimit] = useState(ROWS_PER_STEP);
  // A new search, filter or order starts again from its first rows.
  const refine =
    <T,>(set: (value: T) => void) =>
    (value: T) => {
      set(value);
      setLimit(ROWS_PER_STEP);
    };

  const shown = useMemo(() => {
    const needle = text.trim().toLowerCase();
    const filtered = rows.filter(
      (r) => (!needle || `${r.name} ${r.slug} ${r.site}`.toLowerCase().includes(needle)) && (!site || r.site === site) && (!state || r.state === state),
    );
    const compare = SORTS[sort.key];
    const bySite = (a: OverviewRow, b: OverviewRow) => (grouped ? (a.site === '' ? 1 : 0) - (b.site === '' ? 1 : 0) || a.site.localeCompare(b.site) : 0);
    return filtered.sort((a, b) => bySite(a, b) || (sort.desc ? -1 : 1) * compare(a, b) || a.name.localeCompare(b.name));
  }, [rows, text, site, state, sort, grouped]);
  const groupSizes = useMemo(() => {
    const sizes = new Map<string, number>();
    for (const row of shown) sizes.set(row.site, (sizes.get(row.site) ?? 0) + 1);
    return sizes;
  }, [shown]);

  function header(key: SortKey, label: string, className = '') {
    const active = sort.key === key;
    return (
      <th scope="col" aria-sort={active ? (sort.desc ? 'descending' : 'ascending') : 'none'} className={`px-3 py-2 text-left font-medium ${className}`}>
        <button
          type="button"
          className="inline-flex items-center gap-1 rounded hover:text-tide"
          onClick={() => refine(setSort)({ key, desc: active ? !sort.desc : key !== 'name' && key !== 'site' })}
        >
          {label}
          <span aria-hidden="true" className="text-ink-faint">
            {active ? (sort.desc ? '↓' : '↑') : '↕'}
          </span>
        </button>
      </th>
    );
  }

  return (
    <div>
      <div className="mb-3 flex flex-wrap items-end gap-3" role="search">
        <Field label="Find a series" tone="filter">
          <input type="search" value={text} onChange={(e) => refine(setText)(e.target.value)} placeholder="Name, slug or site" className={`${CONTROL} w-56`} />
        </Field>
        {sites.length > 1 ? (
          <>
            <Field label="Site" tone="filter">
              <SiteNameSelect sites={sites} value={site} onChange={refine(setSite)} anyLabel="All sites" />
            </Field>
            <label className="flex items-center gap-2 pb-1.5 text-sm">
              <input type="checkbox" checked={grouped} onChange={(e) => refine(setGrouped)(e.target.checked)} data-testid="group-by-site" />
              Group by site
            </label>
          </>
        ) : null}
        <Field label="State" tone="filter">
          <select value={state} onChange={(e) => refine(setState)(e.target.value)} className={CONTROL}>
            <option value="">Any state</option>
            {Object.entries(STATE_LABELS).map(([value, label]) => (
              <option key={value} value={value}>
                {label}
              </option>
            ))}
          </select>
        </Field>
        <p className="ml-auto text-sm text-ink-soft" aria-live="polite">
          {shown.length} of {rows.length} series
        </p>
      </div>
      {shown.length === 0 ? (
        <Empty>
          {rows.length === 0
            ? (noSeries ?? (
                <>
                  No series are registered yet.{' '}
                  <Link href="/series/new" className="text-tide hover:underline">
                    Register one
                  </Link>{' '}
                  (leads).
                </>
              ))
            : 'No series match these filters.'}
        </Empty>
      ) : (
        <DataTable
          caption="Every series with its data freshness, state and latest indicator trends"
          testId="overview-table"
          className="sm:min-w-[640px]"
          head={
            <>
              {header('name', 'Series')}
              {header('state', 'State')}
              {header('lastData', 'Last data', 'hidden sm:table-cell')}
              {siteColumn ? header('site', 'Site', 'hidden md:table-cell') : null}
              {header('tau', 'Indicator trend (tau, p)', 'hidden sm:table-cell')}
              <th scope="col" className="hidden px-3 py-2 text-left font-medium sm:table-cell">
                Recent curve
              </th>
            </>
          }
          footer={
            shown.length > limit ? (
              <div className="flex flex-wrap items-center gap-3 border-t border-rule px-3 py-2 text-sm">
                <span className="text-ink-soft">
                  Showing the first {limit} of {shown.length}.
                </span>
                <Button className="text-tide" onClick={() => setLimit(limit + ROWS_PER_STEP)}>
                  Show {Math.min(ROWS_PER_STEP, shown.length - limit)} more
                </Button>
                <Button variant="quiet" onClick={() => setLimit(shown.length)}>
                  Show all {shown.length}
                </Button>
              </div>
            ) : null
          }
        >
          {shown.slice(0, limit).map((row, index, page) => (
            <Fragment key={row.id}>
              {grouped && (index === 0 || page[index - 1].site !== row.site) ? (
                <tr className="border-t border-rule bg-paper" data-site-group={row.siteSlug ?? ''}>
                  <th scope="colgroup" colSpan={siteColumn ? 6 : 5} className="px-3 py-1.5 text-left font-semibold">
                    {row.site ? <SiteName row={row} /> : 'No site'} <span className="font-normal text-ink-soft">· {groupSizes.get(row.site)} series</span>
                    <SiteAlertNote group={siteAlerts.find((g) => g.siteSlug === row.siteSlug)} />
                  </th>
                </tr>
              ) : null}
              <tr data-series={row.slug} className="hover:bg-paper/60">
                <td className="px-3 py-2">
                  <Link href={`/series/${row.slug}`} className="font-medium text-tide hover:underline">
                    {row.name}
                  </Link>
                  <div className="font-mono text-xs text-ink-faint">{row.slug}</div>
                  {siteColumn && row.site ? <div className="text-xs text-ink-soft md:hidden">{row.site}</div> : null}
                  {row.indicators.length ? (
                    <div className="mt-1 text-xs sm:hidden">
                      <IndicatorTrends indicators={row.indicators} />
                    </div>
                  ) : null}
                </td>
                <td className="px-3 py-2">
                  {row.state === 'alert' ? (
                    <Link href={`/alerts?queue=triage&series=${row.slug}`} className="rounded">
                      <StateBadge state={row.state} detail={`${row.openAlerts}`} />
                    </Link>
                  ) : (
                    <StateBadge state={row.state} />
                  )}
                  <div className="mt-1 text-xs sm:hidden">
                    <RowFreshness row={row} now={now} />
                  </div>
                </td>
                <td className="hidden px-3 py-2 sm:table-cell">
                  <div>
                    <LocalTime t={row.lastDataAt} timeZone={row.timeZone} />
                  </div>
                  <div className="mt-0.5 flex items-center gap-1 text-xs text-ink-faint">
                    <RowFreshness row={row} now={now} />
                    <span>{row.timeZone}</span>
                  </div>
                </td>
                {siteColumn ? (
                  <td className="hidden px-3 py-2 md:table-cell">
                    <SiteName row={row} />
                  </td>
                ) : null}
                <td className="hidden px-3 py-2 sm:table-cell">
                  <IndicatorTrends indicators={row.indicators} />
                </td>
                <td className="hidden px-3 py-2 sm:table-cell">
                  {row.spark ? (
                    <Sparkline path={row.spark.path} label={`Rolling ${indicatorLabel(row.spark.indicator)} of ${row.name}`} />
                  ) : (
                    <span className="text-ink-faint">–</span>
                  )}
                </td>
              </tr>
            </Fragment>
          ))}
        </DataTable>
      )}
      <p className="mt-2 text-xs text-ink-faint">
        Late: no new observation for more than three sampling intervals (two days for irregular records). The arrow is the direction each indicator is tested in
        (↑ rising, ↓ falling, ↕ either way); p is the surrogate p in that direction. p* is the Kendall test&apos;s p, shown where the series runs no surrogates:
        descriptive only, since it assumes independent values. Times are in each series&apos; time zone; hover for UTC.
      </p>
    </div>
  );
}
