import Link from 'next/link';
import { AlertActions } from '@/components/alerts/AlertActions';
import { AlertNotes } from '@/components/alerts/AlertNotes';
import { EvidenceCharts } from '@/components/alerts/EvidenceCharts';
import { SiteIndicatorsView } from '@/components/sites/SiteIndicators';
import { ProvenancePanel, SiteProvenancePanel } from '@/components/provenance/ProvenancePanel';
import { AlertStateBadge, SeverityBadge } from '@/components/Badges';
import { Caution } from '@/components/Caution';
import { LocalTime } from '@/components/LocalTime';
import { Empty, Panel } from '@/components/States';
import { fetchAlertPage } from '@/lib/alerts/page-data';
import { requireRole } from '@/lib/auth/guard';
import { formatP, formatTau, formatValue } from '@/lib/display/format';
import { DIRECTION_WORDS, indicatorLabel } from '@/lib/display/analysis-labels';
import { describeCalibration, kendallPLabel, tauThreshold, tauWithDirection } from '@/lib/alerts/wording';
import { idParam } from '@/lib/http/params';
import { foundOr404 } from '@/lib/http/page';
import { roleAtLeast } from '@/lib/auth/roles';
import { Breadcrumb } from '@/components/ui/Breadcrumb';

export const metadata = { title: 'Alert' };

const ACTION_WORDS: Record<string, string> = {
  open: 'opened by the analysis',
  acknowledge: 'taken',
  assign: 'assigned',
  escalate: 'escalated',
  confirm: 'confirmed',
  dismiss: 'set aside',
  reopen: 'reopened',
  evaluate: 'evaluated again',
};

/** Actions whose word does not already say where the alert went. */
const SHOWS_STATE = new Set(['open', 'assign', 'reopen', 'evaluate']);

export default async function AlertPage({ params }: { params: Promise<{ id: string }> }) {
  const actor = await requireRole('viewer');
  const { id: raw } = await params;
  const { detail, firstView, latestView, siteView, marks, colleagues, provenance, siteProvenance } = await foundOr404(async () =>
    fetchAlertPage(idParam(raw, 'Alert'), actor),
  );
  const tz = detail.on.timeZone;
  const lastEval = detail.evidence.evaluations[detail.evidence.evaluations.length - 1];
  const rule = detail.rule;
  return (
    <section className="space-y-4">
      <Breadcrumb trail={[{ href: '/alerts', label: 'Alerts' }]} here={`#${detail.id}`} />
      <header className="flex flex-wrap items-center gap-3">
        <h1 className="text-xl font-semibold">
          Alert #{detail.id}:{' '}
          {rule ? `${indicatorLabel(rule.indicator)} ${DIRECTION_WORDS[rule.direction]}` : detail.kind === 'data-late' ? 'data late' : 'abrupt shift of level'}{' '}
          on{' '}
          <Link href={detail.on.href} className="text-tide hover:underline">
            {detail.on.name}
          </Link>
        </h1>
        <SeverityBadge severity={detail.severity} />
        <span data-testid="alert-state">
          <AlertStateBadge state={detail.state} />
        </span>
      </header>
      <Caution />
      <div className="grid grid-cols-1 gap-4 lg:grid-cols-[minmax(0,1fr)_340px]">
        <div className="min-w-0 space-y-4">
          <Panel title="Evidence" id="evidence">
            {rule ? (
              <dl className="num mb-3 grid grid-cols-2 gap-x-4 gap-y-1 text-sm sm:grid-cols-4" data-testid="alert-evidence">
                <dt className="text-ink-soft">Rule</dt>
                <dd>
                  {tauThreshold(rule.minTau, rule.direction)}
                  {rule.maxSurrogateP !== null ? `, surrogate p ≤ ${formatP(rule.maxSurrogateP)}` : ''}
                  {rule.fdrLevel !== null ? `, q ≤ ${rule.fdrLevel}` : ''}
                </dd>
                <dt className="text-ink-soft">Strongest τ</dt>
                <dd>
                  {formatTau(detail.peakTau)} in the rule&apos;s direction ({DIRECTION_WORDS[rule.direction]})
                </dd>
                <dt className="text-ink-soft">Latest τ</dt>
                <dd>{tauWithDirection(lastEval?.tau, lastEval?.direction)}</dd>
                <dt className="text-ink-soft">Surrogate p</dt>
                <dd>{formatP(lastEval?.surrogateP)}</dd>
                <dt className="text-ink-soft">Kendall p</dt>
                <dd>{kendallPLabel(lastEval?.kendallP)}</dd>
                <dt className="text-ink-soft">Evaluations</dt>
                <dd>{detail.evaluationCount}</dd>
                <dt className="text-ink-soft">False alarms</dt>
                <dd className="sm:col-span-3" data-testid="rule-calibration">
                  {detail.site
                    ? 'not calibrated: a backtest replays one series, and this rule is on the site’s series together'
                    : describeCalibration(rule.calibration)}
                </dd>
              </dl>
            ) : detail.silence ? (
              <dl className="num mb-3 grid grid-cols-2 gap-x-4 gap-y-1 text-sm sm:grid-cols-4" data-testid="alert-evidence">
                <dt className="text-ink-soft">Kind</dt>
                <dd>data late: the series stopped delivering</dd>
                <dt className="text-ink-soft">Last data</dt>
                <dd>
                  <LocalTime t={detail.silence.lastDataAt} timeZone={tz} withZone />
                </dd>
                <dt className="text-ink-soft">Data back</dt>
                <dd>{detail.silence.backAt === null ? 'not yet' : <LocalTime t={detail.silence.backAt} timeZone={tz} withZone />}</dd>
                <dt className="text-ink-soft">Closes</dt>
                <dd>by itself when data return</dd>
              </dl>
            ) : (
              <dl className="num mb-3 grid grid-cols-2 gap-x-4 gap-y-1 text-sm sm:grid-cols-4" data-testid="alert-evidence">
                <dt className="text-ink-soft">Kind</dt>
                <dd>abrupt shift of level (change-point detection)</dd>
                <dt className="text-ink-soft">Shift at</dt>
                <dd>
                  <LocalTime t={detail.shift?.time ?? null} timeZone={tz} withZone />
                </dd>
                <dt className="text-ink-soft">Size</dt>
                <dd>{detail.shift?.size === null || detail.shift?.size === undefined ? 'not given' : formatValue(detail.shift.size, detail.series?.unit)}</dd>
                <dt className="text-ink-soft">After it</dt>
                <dd>indicators are computed on the stretch after the shift only</dd>
              </dl>
            )}
            {detail.series ? (
              <EvidenceCharts
                first={firstView}
                latest={latestView ?? firstView}
                indicator={rule?.indicator ?? null}
                series={{ slug: detail.series.slug, name: detail.series.name, unit: detail.series.unit, timeZone: tz }}
                marks={detail.shift ? [...marks, { at: detail.shift.time, note: 'abrupt shift (this alert)' }] : marks}
              />
            ) : siteView && detail.site ? (
              <SiteIndicatorsView slug={detail.site.slug} timeZone={tz} view={siteView} only={rule?.indicator} />
            ) : (
              <Empty>The site analysis this alert rests on is no longer stored.</Empty>
            )}
          </Panel>
          <Panel title="Notes" id="notes">
            <AlertNotes alertId={detail.id} notes={detail.notes} canWrite={roleAtLeast(actor.role, 'analyst')} timeZone={tz} />
          </Panel>
        </div>
        <aside className="space-y-4">
          <Panel title="Decide" id="actions">
            <p className="mb-2 text-sm text-ink-soft">
              Assigned to {detail.assignee?.name ?? 'nobody'}.{detail.dismissReason ? ` Set aside as: ${detail.dismissReason}.` : ''}
            </p>
            <AlertActions alertId={detail.id} version={detail.version} actions={detail.allowedActions} users={colleagues} />
          </Panel>
          <Panel title="Reproduce the evidence" id="provenance">
            {detail.series ? <ProvenancePanel analyses={provenance} /> : <SiteProvenancePanel analyses={siteProvenance} />}
          </Panel>
          <Panel title="Timeline" id="timeline">
            {detail.timeline.length === 0 ? (
              <Empty>Nothing has happened yet.</Empty>
            ) : (
              <ol className="space-y-2 text-sm" data-testid="timeline">
                {detail.timeline.map((e) => (
                  <li key={e.id} className="border-l-2 border-rule pl-3">
                    <div className="font-medium">
                      {ACTION_WORDS[e.action] ?? e.action}
                      {e.toState && SHOWS_STATE.has(e.action) ? ` → ${e.toState}` : ''}
                    </div>
                    <div className="text-xs text-ink-soft">
                      {e.actor?.name ?? 'Brinkwatch'} · <LocalTime t={e.at} timeZone={tz} withZone />
                      {e.reason ? ` · ${e.reason}` : ''}
                    </div>
                    {e.detail ? <p className="text-xs">{e.detail}</p> : null}
                  </li>
                ))}
              </ol>
            )}
          </Panel>
        </aside>
      </div>
    </section>
  );
}
