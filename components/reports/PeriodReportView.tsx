import type { ReactNode } from 'react';
import { Caution } from '@/components/Caution';
import { Empty } from '@/components/States';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import { formatUtc } from '@/lib/display/format';
import type { PeriodReport, ReportTable } from '@/lib/reports/period-shape';

const pct = (share: number | null) => (share === null ? '–' : `${(share * 100).toFixed(1)} %`);
const hrs = (h: number | null) => (h === null ? '–' : `${h.toFixed(1)} h`);
const when = (iso: string | null) => (iso ? formatUtc(Date.parse(iso)) : '–');

/** One column of a report table: its header and how a row fills the cell. */
interface Column<T> {
  header: string;
  cell: (row: T) => ReactNode;
  /** the row's name, read first by screen readers (a `th` of scope row) */
  rowHeader?: boolean;
  numeric?: boolean;
  nowrap?: boolean;
  breakAll?: boolean;
}

/**
 * A section of the report: its title and count, its CSV download (`table`; a section without one has none), and
 * the table itself, or a plain "none" when the period has no rows.
 */
function TableSection<T>({
  title,
  table,
  csvBase,
  caption,
  numeric = false,
  rows,
  rowKey,
  columns,
}: {
  title: string;
  table?: ReportTable;
  csvBase: string;
  caption: string;
  /** the whole table in figures (tabular numerals) */
  numeric?: boolean;
  rows: T[];
  rowKey: (row: T, index: number) => string | number;
  columns: Column<T>[];
}) {
  return (
    <section className="report-section space-y-2" aria-label={title} data-testid={`report-${table ?? title.toLowerCase().replace(/\W+/g, '-')}`}>
      <div className="flex items-baseline justify-between gap-3">
        <h2 className="font-semibold">
          {title} <span className="text-sm font-normal text-ink-soft">({rows.length})</span>
        </h2>
        {table ? (
          <a className="no-print text-sm text-tide hover:underline" href={`${csvBase}&format=csv&table=${table}`} download>
            CSV
          </a>
        ) : null}
      </div>
      {rows.length === 0 ? (
        <Empty>None in this period.</Empty>
      ) : (
        <DataTable caption={caption} frame="plain" className={numeric ? 'num text-sm' : 'text-sm'} columns={columns.map((c) => c.header)}>
          {rows.map((row, i) => (
            <tr key={rowKey(row, i)}>
              {columns.map((c) => {
                const className = [CELL_TIGHT, c.numeric ? 'num' : '', c.nowrap ? 'whitespace-nowrap' : '', c.breakAll ? 'break-all' : '']
                  .filter(Boolean)
                  .join(' ');
                return c.rowHeader ? (
                  <th key={c.header} scope="row" className={`${className} text-left font-medium`}>
                    {c.cell(row)}
                  </th>
                ) : (
                  <td key={c.header} className={className}>
                    {c.cell(row)}
                  </td>
                );
              })}
            </tr>
          ))}
        </DataTable>
      )}
    </section>
  );
}

/**
 * The period report as one printable document: headline numbers, then every table of the report. Renders only
 * what lib/reports/period.ts assembled; times in UTC, as the period's days are.
 */
export function PeriodReportView({ report }: { report: PeriodReport }) {
  const query = new URLSearchParams({ from: report.period.from, to: report.period.to, ...(report.site ? { site: report.site } : {}) });
  const csvBase = `/api/reports/period?${query}`;
  const d = report.decisions;
  return (
    <article className="report space-y-5" data-testid="period-report">
      <header>
        <p className="font-mono text-xs uppercase tracking-widest text-tide">Brinkwatch · period report</p>
        <h1 className="text-2xl font-semibold">
          {report.period.label} · {report.site ?? 'whole network'}
        </h1>
        <p className="text-sm text-ink-soft">
          {report.period.from} to {report.period.to} (UTC days) · prepared {when(report.generatedAt)}
        </p>
      </header>
      <Caution />
      <dl className="grid grid-cols-2 gap-3 text-sm sm:grid-cols-4" data-testid="report-headline">
        {[
          ['Series', String(report.series.length)],
          ['Data completeness', pct(report.completeness.share)],
          ['Alerts opened', String(d.opened)],
          ['Decided / awaiting', `${d.decided} / ${d.undecided}`],
          ['Median time to decision', hrs(d.medianHoursToDecision)],
          ['Mean time to decision', hrs(d.meanHoursToDecision)],
          ['Late stretches', String(report.late.length)],
          ['Changes of settings or rules', String(report.changes.length)],
        ].map(([label, value]) => (
          <div key={label} className="rounded border border-rule p-2">
            <dt className="text-xs text-ink-soft">{label}</dt>
            <dd className="num text-lg font-semibold">{value}</dd>
          </div>
        ))}
      </dl>

      <TableSection
        title="Series"
        table="series"
        csvBase={csvBase}
        caption="Status of every series"
        numeric
        rows={report.series}
        rowKey={(s) => s.id}
        columns={[
          { header: 'Series', rowHeader: true, cell: (s) => s.name },
          { header: 'Site', cell: (s) => s.site || '–' },
          { header: 'Now', cell: (s) => `${s.stateNow.replace('-', ' ')}${s.freshnessNow === 'late' ? ', data late' : ''}` },
          { header: 'Received / expected', cell: (s) => `${s.received} / ${s.expected ?? '–'}` },
          { header: 'Complete', cell: (s) => pct(s.completeness) },
          { header: 'Late stretches', cell: (s) => s.lateStretches },
          { header: 'Late time', cell: (s) => hrs(s.lateHours) },
          { header: 'Alerts opened', cell: (s) => s.alertsOpened },
          { header: 'Open at end', cell: (s) => s.openAtEnd },
        ]}
      />

      <TableSection
        title="Alerts opened and their decisions"
        table="alerts"
        csvBase={csvBase}
        caption="Alerts opened in the period"
        rows={report.alerts}
        rowKey={(a) => a.id}
        columns={[
          {
            header: 'Alert',
            rowHeader: true,
            cell: (a) => (
              <>
                #{a.id} <span className="text-ink-soft">{a.severity}</span>
              </>
            ),
          },
          { header: 'Series', cell: (a) => a.seriesName },
          { header: 'What', cell: (a) => a.subject },
          { header: 'Opened', nowrap: true, cell: (a) => when(a.openedAt) },
          { header: 'Decision', cell: (a) => (a.decision ? `${a.decision}${a.decidedBy ? ` by ${a.decidedBy}` : ''}` : `awaiting (${a.stateNow})`) },
          { header: 'Reason and note', cell: (a) => [a.reason, a.note].filter(Boolean).join(': ') || '–' },
          { header: 'Time to decision', numeric: true, cell: (a) => hrs(a.hoursToDecision) },
        ]}
      />

      <TableSection
        title="Late stretches"
        table="late"
        csvBase={csvBase}
        caption="Silences longer than each series' lateness allowance"
        rows={report.late}
        rowKey={(l) => `${l.seriesSlug}-${l.lastDataAt}`}
        columns={[
          { header: 'Series', rowHeader: true, cell: (l) => l.seriesName },
          { header: 'Last data', cell: (l) => when(l.lastDataAt) },
          { header: 'Data back', cell: (l) => (l.backAt ? when(l.backAt) : 'still silent at the end') },
          { header: 'Silent for', numeric: true, cell: (l) => hrs(l.silentHours) },
          { header: 'Alert', cell: (l) => (l.alertId ? `#${l.alertId}` : '–') },
        ]}
      />

      <TableSection
        title="Changes of settings and rules"
        table="changes"
        csvBase={csvBase}
        caption="Who changed what, when and why"
        rows={report.changes}
        rowKey={(c, i) => i}
        columns={[
          { header: 'When', nowrap: true, cell: (c) => when(c.at) },
          { header: 'Who', cell: (c) => c.who },
          { header: 'Series', cell: (c) => c.seriesSlug ?? '–' },
          { header: 'What', cell: (c) => c.what },
          { header: 'Change', breakAll: true, cell: (c) => c.detail || '–' },
          { header: 'Why', cell: (c) => c.why ?? 'none given' },
        ]}
      />

      <TableSection
        title="Calibrated false-alarm rates of the rules"
        table="calibrations"
        csvBase={csvBase}
        caption="Each active rule's calibrated false alarms per year on records without slowing down"
        numeric
        rows={report.calibrations}
        rowKey={(c) => c.ruleId}
        columns={[
          { header: 'Rule', rowHeader: true, cell: (c) => `#${c.ruleId}` },
          { header: 'Series', cell: (c) => c.seriesSlug || `all of site ${c.siteSlug}` },
          { header: 'Indicator', cell: (c) => c.indicator },
          { header: 'Severity', cell: (c) => c.severity },
          {
            header: 'False alarms per year',
            cell: (c) =>
              c.siteSlug !== null
                ? 'none for a site rule (backtests replay one series)'
                : c.falseAlarmsPerYear === null
                  ? 'not calibrated yet'
                  : c.falseAlarmsPerYear.toPrecision(3),
          },
          { header: 'Interval', cell: (c) => (c.interval ? `${c.interval[0].toPrecision(3)}–${c.interval[1].toPrecision(3)}` : '–') },
          { header: 'Calibrated', cell: (c) => when(c.calibratedAt) },
        ]}
      />

      <TableSection
        title="Marks: tipping points and maintenance"
        table="marks"
        csvBase={csvBase}
        caption="Marks set on the records in the period"
        rows={report.marks}
        rowKey={(m, i) => i}
        columns={[
          { header: 'When', nowrap: true, cell: (m) => when(m.at) },
          { header: 'Series', cell: (m) => m.seriesSlug },
          { header: 'Kind', cell: (m) => (m.kind === 'tipping-point' ? 'tipping point' : 'maintenance') },
          { header: 'Note', cell: (m) => m.note || '–' },
          { header: 'By', cell: (m) => m.by ?? '–' },
        ]}
      />

      <TableSection
        title="Abrupt shifts"
        csvBase={csvBase}
        caption="Abrupt shifts of level alerted in the period"
        rows={report.shifts}
        rowKey={(s) => s.alertId}
        columns={[
          { header: 'Alert', rowHeader: true, cell: (s) => `#${s.alertId}` },
          { header: 'Series', cell: (s) => s.seriesSlug },
          { header: 'Shift at', cell: (s) => when(s.at || null) },
          { header: 'Size', numeric: true, cell: (s) => (s.size === null ? '–' : s.size.toPrecision(3)) },
          { header: 'Now', cell: (s) => s.stateNow },
        ]}
      />
    </article>
  );
}
