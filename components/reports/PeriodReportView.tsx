import type { ReactNode } from 'react';
import { Caution } from '@/components/Caution';
import { Empty } from '@/components/States';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import { formatUtc } from '@/lib/display/format';
import type { PeriodReport, ReportTable } from '@/lib/reports/period-shape';

const pct = (share: number | null) => (share === null ? '–' : `${(share * 100).toFixed(1)} %`);
const hrs = (h: number | null) => (h === null ? '–' : `${h.toFixed(1)} h`);
const when = (iso: string | null) => (iso ? formatUtc(Date.parse(iso)) : '–');

/** A section of the report with its CSV download; `testId` names it for tests. */
function Section({ title, table, csvBase, children, count }: { title: string; table?: ReportTable; csvBase: string; children: ReactNode; count: number }) {
  return (
    <section className="report-section space-y-2" aria-label={title} data-testid={`report-${table ?? title.toLowerCase().replace(/\W+/g, '-')}`}>
      <div className="flex items-baseline justify-between gap-3">
        <h2 className="font-semibold">
          {title} <span className="text-sm font-normal text-ink-soft">({count})</span>
        </h2>
        {table ? (
          <a className="no-print text-sm text-tide hover:underline" href={`${csvBase}&format=csv&table=${table}`} download>
            CSV
          </a>
        ) : null}
      </div>
      {count === 0 ? <Empty>None in this period.</Empty> : children}
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

      <Section title="Series" table="series" csvBase={csvBase} count={report.series.length}>
        <DataTable
          caption="Status of every series"
          frame="plain"
          className="num text-sm"
          columns={['Series', 'Site', 'Now', 'Received / expected', 'Complete', 'Late stretches', 'Late time', 'Alerts opened', 'Open at end']}
        >
          {report.series.map((s) => (
            <tr key={s.id}>
              <th scope="row" className={`${CELL_TIGHT} text-left font-medium`}>
                {s.name}
              </th>
              <td className={CELL_TIGHT}>{s.site || '–'}</td>
              <td className={CELL_TIGHT}>
                {s.stateNow.replace('-', ' ')}
                {s.freshnessNow === 'late' ? ', data late' : ''}
              </td>
              <td className={CELL_TIGHT}>
                {s.received} / {s.expected ?? '–'}
              </td>
              <td className={CELL_TIGHT}>{pct(s.completeness)}</td>
              <td className={CELL_TIGHT}>{s.lateStretches}</td>
              <td className={CELL_TIGHT}>{hrs(s.lateHours)}</td>
              <td className={CELL_TIGHT}>{s.alertsOpened}</td>
              <td className={CELL_TIGHT}>{s.openAtEnd}</td>
            </tr>
          ))}
        </DataTable>
      </Section>

      <Section title="Alerts opened and their decisions" table="alerts" csvBase={csvBase} count={report.alerts.length}>
        <DataTable
          caption="Alerts opened in the period"
          frame="plain"
          className="text-sm"
          columns={['Alert', 'Series', 'What', 'Opened', 'Decision', 'Reason and note', 'Time to decision']}
        >
          {report.alerts.map((a) => (
            <tr key={a.id}>
              <th scope="row" className={`${CELL_TIGHT} text-left font-medium`}>
                #{a.id} <span className="text-ink-soft">{a.severity}</span>
              </th>
              <td className={CELL_TIGHT}>{a.seriesName}</td>
              <td className={CELL_TIGHT}>{a.subject}</td>
              <td className={`${CELL_TIGHT} whitespace-nowrap`}>{when(a.openedAt)}</td>
              <td className={CELL_TIGHT}>{a.decision ? `${a.decision}${a.decidedBy ? ` by ${a.decidedBy}` : ''}` : `awaiting (${a.stateNow})`}</td>
              <td className={CELL_TIGHT}>{[a.reason, a.note].filter(Boolean).join(': ') || '–'}</td>
              <td className={`${CELL_TIGHT} num`}>{hrs(a.hoursToDecision)}</td>
            </tr>
          ))}
        </DataTable>
      </Section>

      <Section title="Late stretches" table="late" csvBase={csvBase} count={report.late.length}>
        <DataTable
          caption="Silences longer than each series' lateness allowance"
          frame="plain"
          className="text-sm"
          columns={['Series', 'Last data', 'Data back', 'Silent for', 'Alert']}
        >
          {report.late.map((l) => (
            <tr key={`${l.seriesSlug}-${l.lastDataAt}`}>
              <th scope="row" className={`${CELL_TIGHT} text-left font-medium`}>
                {l.seriesName}
              </th>
              <td className={CELL_TIGHT}>{when(l.lastDataAt)}</td>
              <td className={CELL_TIGHT}>{l.backAt ? when(l.backAt) : 'still silent at the end'}</td>
              <td className={`${CELL_TIGHT} num`}>{hrs(l.silentHours)}</td>
              <td className={CELL_TIGHT}>{l.alertId ? `#${l.alertId}` : '–'}</td>
            </tr>
          ))}
        </DataTable>
      </Section>

      <Section title="Changes of settings and rules" table="changes" csvBase={csvBase} count={report.changes.length}>
        <DataTable caption="Who changed what, when and why" frame="plain" className="text-sm" columns={['When', 'Who', 'Series', 'What', 'Change', 'Why']}>
          {report.changes.map((c, i) => (
            <tr key={i}>
              <td className={`${CELL_TIGHT} whitespace-nowrap`}>{when(c.at)}</td>
              <td className={CELL_TIGHT}>{c.who}</td>
              <td className={CELL_TIGHT}>{c.seriesSlug ?? '–'}</td>
              <td className={CELL_TIGHT}>{c.what}</td>
              <td className={`${CELL_TIGHT} break-all`}>{c.detail || '–'}</td>
              <td className={CELL_TIGHT}>{c.why ?? 'none given'}</td>
            </tr>
          ))}
        </DataTable>
      </Section>

      <Section title="Calibrated false-alarm rates of the rules" table="calibrations" csvBase={csvBase} count={report.calibrations.length}>
        <DataTable
          caption="Each active rule's calibrated false alarms per year on records without slowing down"
          frame="plain"
          className="num text-sm"
          columns={['Rule', 'Series', 'Indicator', 'Severity', 'False alarms per year', 'Interval', 'Calibrated']}
        >
          {report.calibrations.map((c) => (
            <tr key={c.ruleId}>
              <th scope="row" className={`${CELL_TIGHT} text-left font-medium`}>
                #{c.ruleId}
              </th>
              <td className={CELL_TIGHT}>{c.seriesSlug}</td>
              <td className={CELL_TIGHT}>{c.indicator}</td>
              <td className={CELL_TIGHT}>{c.severity}</td>
              <td className={CELL_TIGHT}>{c.falseAlarmsPerYear === null ? 'not calibrated yet' : c.falseAlarmsPerYear.toPrecision(3)}</td>
              <td className={CELL_TIGHT}>{c.interval ? `${c.interval[0].toPrecision(3)}–${c.interval[1].toPrecision(3)}` : '–'}</td>
              <td className={CELL_TIGHT}>{when(c.calibratedAt)}</td>
            </tr>
          ))}
        </DataTable>
      </Section>

      <Section title="Marks: tipping points and maintenance" table="marks" csvBase={csvBase} count={report.marks.length}>
        <DataTable caption="Marks set on the records in the period" frame="plain" className="text-sm" columns={['When', 'Series', 'Kind', 'Note', 'By']}>
          {report.marks.map((m, i) => (
            <tr key={i}>
              <td className={`${CELL_TIGHT} whitespace-nowrap`}>{when(m.at)}</td>
              <td className={CELL_TIGHT}>{m.seriesSlug}</td>
              <td className={CELL_TIGHT}>{m.kind === 'tipping-point' ? 'tipping point' : 'maintenance'}</td>
              <td className={CELL_TIGHT}>{m.note || '–'}</td>
              <td className={CELL_TIGHT}>{m.by ?? '–'}</td>
            </tr>
          ))}
        </DataTable>
      </Section>

      <Section title="Abrupt shifts" csvBase={csvBase} count={report.shifts.length}>
        <DataTable
          caption="Abrupt shifts of level alerted in the period"
          frame="plain"
          className="text-sm"
          columns={['Alert', 'Series', 'Shift at', 'Size', 'Now']}
        >
          {report.shifts.map((s) => (
            <tr key={s.alertId}>
              <th scope="row" className={`${CELL_TIGHT} text-left font-medium`}>
                #{s.alertId}
              </th>
              <td className={CELL_TIGHT}>{s.seriesSlug}</td>
              <td className={CELL_TIGHT}>{when(s.at || null)}</td>
              <td className={`${CELL_TIGHT} num`}>{s.size === null ? '–' : s.size.toPrecision(3)}</td>
              <td className={CELL_TIGHT}>{s.stateNow}</td>
            </tr>
          ))}
        </DataTable>
      </Section>
    </article>
  );
}
