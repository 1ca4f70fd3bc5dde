'use client';

import { keepPreviousData, useQuery } from '@tanstack/react-query';
import Link from 'next/link';
import { usePathname, useRouter } from 'next/navigation';
import { useState } from 'react';
import { api } from '@/components/api';
import { AlertStateBadge, SeverityBadge } from '@/components/Badges';
import { LocalTime } from '@/components/LocalTime';
import { SeriesPicker } from '@/components/SeriesPicker';
import { SiteNameSelect } from '@/components/sites/SiteNameSelect';
import type { SeriesChoice } from '@/lib/series/registry';
import { Empty, ErrorNote, Loading } from '@/components/States';
import { CELL, DataTable } from '@/components/ui/DataTable';
import { CONTROL, Field } from '@/components/ui/Field';
import { Pager, pageCount } from '@/components/ui/Pager';
import { formatP, formatValue } from '@/lib/display/format';
import { ALERT_KIND_WORDS, indicatorLabel } from '@/lib/display/analysis-labels';
import { tauWithDirection } from '@/lib/alerts/wording';
import type { AlertListItem } from '@/lib/alerts/queries';

export interface QueueFilters {
  queue: 'triage' | 'escalated' | 'mine' | 'closed';
  series: string;
  /** a site's slug */
  site: string;
  severity: '' | 'watch' | 'warning';
  kind: '' | AlertListItem['kind'];
  age: string;
  sort: 'newest' | 'oldest' | 'severity' | 'tau' | 'updated';
  page: number;
}

export interface QueuePage {
  items: AlertListItem[];
  total: number;
  counts: Record<QueueFilters['queue'], number>;
  page: number;
  pageSize: number;
}

const TABS: { key: QueueFilters['queue']; label: string }[] = [
  { key: 'triage', label: 'Triage' },
  { key: 'escalated', label: 'Escalated' },
  { key: 'mine', label: 'Mine' },
  { key: 'closed', label: 'Closed' },
];
const AGES = [
  { value: '', label: 'Any age' },
  { value: '<24h', label: 'Opened in the last 24 h' },
  { value: '<7d', label: 'Opened in the last 7 days' },
  { value: '>2d', label: 'Waiting more than 2 days' },
  { value: '>7d', label: 'Waiting more than 7 days' },
];
const SORTS = [
  { value: 'newest', label: 'Newest first' },
  { value: 'oldest', label: 'Oldest first' },
  { value: 'severity', label: 'Severity' },
  { value: 'tau', label: 'Strongest trend' },
  { value: 'updated', label: 'Recently changed' },
];
const PAGE_SIZE = 25;

function queueSearch(f: QueueFilters): string {
  const params = new URLSearchParams({ queue: f.queue, sort: f.sort, page: String(f.page), pageSize: String(PAGE_SIZE) });
  if (f.series) params.set('series', f.series);
  if (f.site) params.set('site', f.site);
  if (f.severity) params.set('severity', f.severity);
  if (f.kind) params.set('kind', f.kind);
  if (f.age) params.set('age', f.age);
  return params.toString();
}

/** The queues as tabs with their counts, filters kept in the address so a view can be shared; pages of 25. */
export function AlertQueue({
  initialFilters,
  initialPage,
  initialSeries,
  sites,
}: {
  initialFilters: QueueFilters;
  initialPage: QueuePage | null;
  initialSeries: SeriesChoice | null;
  /** the sites to filter by, slug and name */
  sites: { slug: string; name: string }[];
}) {
  const router = useRouter();
  const pathname = usePathname();
  const [filters, setFilters] = useState(initialFilters);
  const [series, setSeries] = useState(initialSeries);
  const search = queueSearch(filters);
  const query = useQuery({
    queryKey: ['alerts', search],
    queryFn: ({ signal }) => api<QueuePage>(`/api/alerts?${search}`, { signal }),
    initialData: search === queueSearch(initialFilters) && initialPage ? initialPage : undefined,
    placeholderData: keepPreviousData,
  });
  function update(next: Partial<QueueFilters>) {
    const merged = { ...filters, page: 1, ...next };
    setFilters(merged);
    router.replace(`${pathname}?${queueSearch(merged)}`, { scroll: false });
  }
  const data = query.data;
  const pages = pageCount(data?.total ?? 0, PAGE_SIZE);

  return (
    <div className="space-y-3">
      <div role="tablist" aria-label="Alert queues" className="flex flex-wrap gap-1 border-b border-rule">
        {TABS.map((tab) => {
          const active = filters.queue === tab.key;
          return (
            <button
              key={tab.key}
              type="button"
              role="tab"
              aria-selected={active}
              onClick={() => update({ queue: tab.key })}
              data-tab={tab.key}
              className={`-mb-px rounded-t border px-3 py-1.5 text-sm ${active ? 'border-rule border-b-card bg-card font-semibold' : 'border-transparent text-ink-soft hover:text-ink'}`}
            >
              {tab.label} <span className="num rounded-full bg-paper px-1.5 text-xs">{data?.counts?.[tab.key] ?? '·'}</span>
            </button>
          );
        })}
      </div>
      <div className="flex flex-wrap items-end gap-3">
        <SeriesPicker
          label="Series"
          value={series}
          onChange={(choice) => {
            setSeries(choice);
            update({ series: choice?.slug ?? '' });
          }}
        />
        {sites.length ? (
          <Field label="Site" tone="filter">
            <SiteNameSelect
              sites={sites.map((s) => ({ value: s.slug, label: s.name }))}
              value={filters.site}
              onChange={(site) => update({ site })}
              anyLabel="All sites"
              testId="alert-site-filter"
            />
          </Field>
        ) : null}
        <Field label="Severity" tone="filter">
          <select className={CONTROL} value={filters.severity} onChange={(e) => update({ severity: e.target.value as QueueFilters['severity'] })}>
            <option value="">Any severity</option>
            <option value="warning">Warning</option>
            <option value="watch">Watch</option>
          </select>
        </Field>
        <Field label="Kind" tone="filter">
          <select className={CONTROL} value={filters.kind} onChange={(e) => update({ kind: e.target.value as QueueFilters['kind'] })}>
            <option value="">Any kind</option>
            {Object.entries(ALERT_KIND_WORDS).map(([kind, words]) => (
              <option key={kind} value={kind}>
                {words[0].toUpperCase() + words.slice(1)}
              </option>
            ))}
          </select>
        </Field>
        <Field label="Age" tone="filter">
          <select className={CONTROL} value={filters.age} onChange={(e) => update({ age: e.target.value })}>
            {AGES.map((a) => (
              <option key={a.value} value={a.value}>
                {a.label}
              </option>
            ))}
          </select>
        </Field>
        <Field label="Sort" tone="filter">
          <select className={CONTROL} value={filters.sort} onChange={(e) => update({ sort: e.target.value as QueueFilters['sort'] })}>
            {SORTS.map((s) => (
              <option key={s.value} value={s.value}>
                {s.label}
              </option>
            ))}
          </select>
        </Field>
        {query.isFetching ? (
          <span className="text-xs text-ink-soft" role="status">
            Updating…
          </span>
        ) : null}
      </div>
      {query.isError ? (
        <ErrorNote error={query.error} />
      ) : !data ? (
        <Loading />
      ) : data.items.length === 0 ? (
        <Empty>No alerts in this queue{filters.series || filters.site || filters.severity || filters.kind || filters.age ? ' with these filters' : ''}.</Empty>
      ) : (
        <DataTable
          caption={`Alerts in the ${filters.queue} queue`}
          testId="alert-table"
          className="min-w-[680px]"
          columns={['Alert', 'Series or site', 'Severity', 'State', 'Latest evidence', 'Opened', 'Assigned']}
        >
          {data.items.map((a) => (
            <tr key={a.id} data-alert={a.id}>
              <td className={CELL}>
                <Link href={`/alerts/${a.id}`} className="font-medium text-tide hover:underline">
                  #{a.id} {a.rule ? indicatorLabel(a.rule.indicator) : ALERT_KIND_WORDS[a.kind]}
                </Link>
                <span className="block text-xs text-ink-soft" data-kind={a.kind}>
                  {ALERT_KIND_WORDS[a.kind]}
                </span>
              </td>
              <td className={CELL}>
                <Link href={a.on.href} className="hover:underline">
                  {a.on.name}
                </Link>
              </td>
              <td className={CELL}>
                <SeverityBadge severity={a.severity} />
              </td>
              <td className={CELL}>
                <AlertStateBadge state={a.state} />
              </td>
              <td className={`num ${CELL} whitespace-nowrap`}>
                {a.kind === 'data-late' ? (
                  <>
                    no data since <LocalTime t={a.silence?.lastDataAt ?? null} timeZone={a.on.timeZone} />
                    {a.silence?.backAt ? (
                      <>
                        {' '}
                        · back <LocalTime t={a.silence.backAt} timeZone={a.on.timeZone} />
                      </>
                    ) : (
                      ''
                    )}
                  </>
                ) : a.kind === 'abrupt-shift' ? (
                  <>
                    shift at <LocalTime t={a.shift?.time ?? null} timeZone={a.on.timeZone} />
                    {a.shift?.size !== null && a.shift?.size !== undefined ? ` · size ${formatValue(a.shift.size)}` : ''}
                  </>
                ) : (
                  <>
                    τ {tauWithDirection(a.latest.tau, a.latest.direction)} · surrogate p {formatP(a.latest.surrogateP)}
                  </>
                )}
              </td>
              <td className={CELL}>
                <LocalTime t={a.createdAt} timeZone={a.on.timeZone} withZone />
              </td>
              <td className={CELL}>{a.assignee?.name ?? <span className="text-ink-faint">nobody</span>}</td>
            </tr>
          ))}
        </DataTable>
      )}
      {data && data.total > PAGE_SIZE ? (
        <Pager label="Pages" page={filters.page} pages={pages} onPage={(page) => update({ page })}>
          {' '}
          · {data.total} alerts
        </Pager>
      ) : null}
    </div>
  );
}
