'use client';

import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { useEffect, useState } from 'react';
import { CartesianGrid, Line, LineChart, ReferenceDot, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import { api } from '@/components/api';
import { ChartFrame } from '@/components/charts/ChartFrame';
import { TimeChart } from '@/components/charts/TimeChart';
import { Empty, ErrorNote, Loading, Panel } from '@/components/States';
import { formatLocal, formatP, formatTau } from '@/lib/display/format';
import type { BacktestJobRecord } from '@/lib/backtest/jobs';
import type { BacktestResult } from '@/lib/backtest/run';
import type { RuleRecord } from '@/lib/alerts/rules';
import { INDICATOR_DIRECTIONS, orientedTau, trendDirectionOf, type RuleDirection, type TrendDirection } from '@/lib/engine/direction';
import type { IndicatorName } from '@/lib/engine/settings';
import { TransitionList } from './TransitionList';

type JobWithResult = BacktestJobRecord & { result?: BacktestResult | null };

const DAY_MS = 86_400_000;
const button = 'rounded border border-rule px-3 py-1 text-sm hover:bg-paper disabled:opacity-50';
const primary = 'rounded bg-tide px-3 py-1 text-sm text-white hover:opacity-90 disabled:opacity-50';

/** How a tau is read, in the words shown beside it. */
function directionWord(d: TrendDirection): string {
  return d === 'rising' ? '↑ rising' : d === 'falling' ? '↓ falling' : '↕ either way';
}

/** A rule's direction; rules stored before directions existed read their indicator's own. */
function ruleDirection(r: RuleRecord): TrendDirection {
  const d = (r as RuleRecord & { direction?: RuleDirection }).direction;
  return d ? trendDirectionOf(d) : INDICATOR_DIRECTIONS[r.indicator as IndicatorName];
}

function yearsText(years: number): string {
  return years >= 1 ? `${years.toFixed(2)} years` : `${(years * 365.25).toFixed(years * 365.25 >= 10 ? 0 : 1)} days`;
}

function leadText(ms: number | null): string {
  if (ms === null) return 'no warning';
  const days = ms / DAY_MS;
  return days >= 365 ? `${(days / 365.25).toFixed(1)} years` : days >= 1 ? `${days.toFixed(days >= 10 ? 0 : 1)} days` : `${(ms / 3_600_000).toFixed(1)} hours`;
}

/** Start a backtest of one of the series' rules, follow its progress, and read its results. */
export function BacktestPanel({ slug, timeZone, canRun }: { slug: string; timeZone: string; canRun: boolean }) {
  const client = useQueryClient();
  const rules = useQuery({ queryKey: ['rules', slug], queryFn: () => api<{ items: RuleRecord[] }>(`/api/series/${slug}/rules`) });
  const list = useQuery({ queryKey: ['backtests', slug], queryFn: () => api<{ backtests: BacktestJobRecord[] }>(`/api/backtests?series=${encodeURIComponent(slug)}`) });
  const [ruleId, setRuleId] = useState<number | null>(null);
  const [every, setEvery] = useState(1);
  const [horizonDays, setHorizonDays] = useState<number | null>(null);
  const [surrogates, setSurrogates] = useState(100);
  const [method, setMethod] = useState<'ar1' | 'phase'>('ar1');
  const [calibrate, setCalibrate] = useState(true);
  const [selected, setSelected] = useState<number | null>(null);
  const chosenRule = ruleId ?? rules.data?.items[0]?.id ?? null;
  const shownId = selected ?? list.data?.backtests[0]?.id ?? null;

  const job = useQuery({
    queryKey: ['backtest', shownId],
    enabled: shownId !== null,
    queryFn: () => api<JobWithResult>(`/api/backtests/${shownId}`),
    refetchInterval: (q) => (q.state.data && (q.state.data.status === 'queued' || q.state.data.status === 'running') ? 1000 : false),
  });

  const start = useMutation({
    mutationFn: () =>
      api<{ jobId: number }>(`/api/rules/${chosenRule}/backtest`, {
        method: 'POST',
        body: { every, horizonDays, calibration: calibrate ? { surrogates, method } : null },
      }),
    onSuccess: ({ jobId }) => {
      setSelected(jobId);
      void client.invalidateQueries({ queryKey: ['backtests', slug] });
    },
  });
  const cancel = useMutation({
    mutationFn: (id: number) => api(`/api/backtests/${id}/cancel`, { method: 'POST' }),
    onSuccess: () => {
      void client.invalidateQueries({ queryKey: ['backtest', shownId] });
      void client.invalidateQueries({ queryKey: ['backtests', slug] });
    },
  });
  const useThreshold = useMutation({
    mutationFn: (v: { ruleId: number; threshold: number; jobId: number }) =>
      api(`/api/rules/${v.ruleId}/threshold`, { method: 'POST', body: { threshold: v.threshold, jobId: v.jobId } }),
    onSuccess: () => void client.invalidateQueries({ queryKey: ['rules', slug] }),
  });

  const current = job.data;
  const running = current && (current.status === 'queued' || current.status === 'running');
  // The picker of past backtests shows each one's status: refresh it once the followed job has finished.
  const finishedStatus = current && !running ? current.status : null;
  useEffect(() => {
    if (finishedStatus) void client.invalidateQueries({ queryKey: ['backtests', slug] });
  }, [finishedStatus, client, slug]);
  const ruleOf = (id: number) => rules.data?.items.find((r) => r.id === id);

  return (
    <Panel title="Backtest" id="backtest">
      <p className="mb-3 max-w-3xl text-sm text-ink-soft">
        Replays a rule on this record as if the data had arrived point by point, and counts how early it would have warned
        before each marked transition and how often it would have raised an alarm with no transition near. A backtest is
        evidence of past performance, not a guarantee: the indicators are statistical evidence, not forecasts, and decisions
        affecting public safety, water supply or ecosystems rest with the responsible authorities.
      </p>
      <TransitionList slug={slug} timeZone={timeZone} canEdit={canRun} />
      {canRun ? (
        <form
          className="mt-4 flex flex-wrap items-end gap-3 text-sm"
          onSubmit={(e) => {
            e.preventDefault();
            start.mutate();
          }}
        >
          <label className="flex flex-col">
            Rule
            <select className="rounded border border-rule bg-card px-2 py-1" value={chosenRule ?? ''} onChange={(e) => setRuleId(Number(e.target.value))} disabled={!rules.data?.items.length}>
              {rules.data?.items.map((r) => (
                <option key={r.id} value={r.id}>
                  #{r.id} {r.indicator} τ ≥ {r.minTau} {directionWord(ruleDirection(r))} ({r.severity})
                </option>
              ))}
            </select>
          </label>
          <label className="flex flex-col">
            Judge every (points)
            <input type="number" min={1} className="w-28 rounded border border-rule px-2 py-1" value={every} onChange={(e) => setEvery(Math.max(1, Number(e.target.value) || 1))} />
          </label>
          <label className="flex flex-col">
            Warning horizon (days)
            <input
              type="number"
              min={1}
              className="w-32 rounded border border-rule px-2 py-1"
              placeholder="one window"
              value={horizonDays ?? ''}
              onChange={(e) => setHorizonDays(e.target.value === '' ? null : Math.max(1, Number(e.target.value) || 1))}
            />
          </label>
          <label className="flex items-center gap-2">
            <input type="checkbox" checked={calibrate} onChange={(e) => setCalibrate(e.target.checked)} /> Calibrate on surrogates
          </label>
          {calibrate ? (
            <>
              <label className="flex flex-col">
                Surrogates
                <input type="number" min={1} max={2000} className="w-24 rounded border border-rule px-2 py-1" value={surrogates} onChange={(e) => setSurrogates(Math.min(2000, Math.max(1, Number(e.target.value) || 1)))} />
              </label>
              <label className="flex flex-col">
                Kind
                <select className="rounded border border-rule bg-card px-2 py-1" value={method} onChange={(e) => setMethod(e.target.value as 'ar1' | 'phase')}>
                  <option value="ar1">AR(1)</option>
                  <option value="phase">phase-randomised</option>
                </select>
              </label>
            </>
          ) : null}
          <button type="submit" className={primary} disabled={chosenRule === null || start.isPending}>
            {start.isPending ? 'Queuing…' : 'Start backtest'}
          </button>
          {start.error ? <ErrorNote error={start.error}>The backtest could not be started.</ErrorNote> : null}
        </form>
      ) : null}
      {rules.isLoading ? <Loading label="Loading rules…" /> : rules.error ? <ErrorNote error={rules.error} /> : !rules.data?.items.length ? <Empty>This series has no rules to backtest yet.</Empty> : null}

      <div className="mt-4">
        {list.isLoading ? (
          <Loading label="Loading backtests…" />
        ) : list.error ? (
          <ErrorNote error={list.error} />
        ) : !list.data?.backtests.length ? (
          <Empty>No backtests of this series yet.</Empty>
        ) : (
          <label className="flex items-center gap-2 text-sm">
            Showing
            <select className="rounded border border-rule bg-card px-2 py-1" value={shownId ?? ''} onChange={(e) => setSelected(Number(e.target.value))}>
              {list.data.backtests.map((b) => (
                <option key={b.id} value={b.id}>
                  #{b.id} rule {b.ruleId} · {b.kind} · {b.status} · {formatLocal(new Date(b.createdAt).getTime(), timeZone)}
                </option>
              ))}
            </select>
          </label>
        )}
      </div>

      {shownId !== null && job.isLoading ? <Loading label="Loading backtest…" /> : null}
      {job.error ? <ErrorNote error={job.error} /> : null}
      {current && running ? (
        <div className="mt-3 flex items-center gap-3">
          <progress className="h-3 w-64" max={1} value={current.progress} aria-label="Backtest progress">
            {Math.round(current.progress * 100)} %
          </progress>
          <span className="text-sm text-ink-soft" role="status" aria-live="polite">
            {current.status === 'queued' ? 'Waiting for the scheduler…' : `${Math.round(current.progress * 100)} % done`}
            {current.cancelRequested ? ' · stopping' : ''}
          </span>
          {canRun ? (
            <button type="button" className={button} onClick={() => cancel.mutate(current.id)} disabled={cancel.isPending || current.cancelRequested}>
              Cancel
            </button>
          ) : null}
        </div>
      ) : null}
      {current?.status === 'failed' ? <ErrorNote>This backtest failed: {current.error}</ErrorNote> : null}
      {current?.status === 'cancelled' ? <p className="mt-3 text-sm text-ink-soft">This backtest was cancelled.</p> : null}
      {current?.status === 'succeeded' && current.result ? (
        <BacktestResults
          result={current.result}
          timeZone={timeZone}
          canSave={canRun}
          saving={useThreshold.isPending}
          saved={useThreshold.isSuccess ? (useThreshold.variables?.threshold ?? null) : null}
          currentThreshold={ruleOf(current.ruleId)?.minTau ?? null}
          onUse={(threshold) => useThreshold.mutate({ ruleId: current.ruleId, threshold, jobId: current.id })}
        />
      ) : null}
      {useThreshold.error ? <ErrorNote error={useThreshold.error}>The threshold could not be saved.</ErrorNote> : null}
    </Panel>
  );
}

function BacktestResults({
  result,
  timeZone,
  canSave,
  saving,
  saved,
  currentThreshold,
  onUse,
}: {
  result: BacktestResult;
  timeZone: string;
  canSave: boolean;
  saving: boolean;
  saved: number | null;
  currentThreshold: number | null;
  onUse: (threshold: number) => void;
}) {
  const [pick, setPick] = useState<number>(result.threshold);
  // results stored before directions existed read tau as rising
  const direction: TrendDirection = result.direction ?? 'rising';
  const word = directionWord(direction);
  const rows = result.evidence.time.map((t, i) => {
    const tau = result.evidence.tau[i];
    return { t, tau: tau === null ? null : orientedTau(tau, direction), p: result.evidence.p[i], threshold: result.threshold };
  });
  const cal = result.calibration;
  const judged = result.judged;
  return (
    <div className="mt-4 space-y-4">
      <dl className="grid grid-cols-2 gap-x-6 gap-y-1 text-sm sm:grid-cols-4">
        <dt className="text-ink-soft">Points replayed</dt>
        <dd className="num">{result.points} (judged every {result.every}, {result.steps} instants)</dd>
        <dt className="text-ink-soft">Window</dt>
        <dd className="num">{result.geometry.windowPoints} points, {result.geometry.detrend} detrending</dd>
        <dt className="text-ink-soft">τ read</dt>
        <dd data-testid="backtest-direction">{word} (threshold τ ≥ {formatTau(result.threshold)} in that direction)</dd>
        <dt className="text-ink-soft">Warning horizon</dt>
        <dd className="num" data-testid="backtest-horizon">{result.horizonMs !== undefined ? leadText(result.horizonMs) : 'since the previous transition'} before a transition</dd>
        {judged ? (
          <>
            <dt className="text-ink-soft">Judged time</dt>
            <dd className="num" data-testid="backtest-judged-time">
              {yearsText(judged.years)} · {judged.surrogateChecks} surrogate checks
              {judged.quietSuppressed ? ` · ${judged.quietSuppressed} held back by the quiet period` : ''}
            </dd>
            <dt className="text-ink-soft">Not judged</dt>
            <dd className="num" data-testid="backtest-not-judged">
              {judged.notJudgedSteps === 0
                ? 'none'
                : `${judged.notJudgedSteps} instants in ${judged.notJudged.length} stretch${judged.notJudged.length === 1 ? '' : 'es'} (` +
                  [
                    judged.belowCoverage ? `${judged.belowCoverage} with under ${Math.round((judged.minCoverage ?? 0.8) * 100)} % observed points in the window` : null,
                    judged.inFlatRun ? `${judged.inFlatRun} with the window inside a run of identical values (a stuck sensor)` : null,
                    judged.notJudgedSteps > (judged.belowCoverage ?? 0) + (judged.inFlatRun ?? 0)
                      ? `${judged.notJudgedSteps - (judged.belowCoverage ?? 0) - (judged.inFlatRun ?? 0)} past the cost bound of the surrogate checks`
                      : null,
                  ]
                    .filter(Boolean)
                    .join('; ') +
                  ')'}
            </dd>
          </>
        ) : null}
        <dt className="text-ink-soft">False alarms</dt>
        <dd className="num">
          {result.falseAlarms.exposureYears > 0 ? (
            <>
              {result.falseAlarms.count} in {yearsText(result.falseAlarms.exposureYears)} of judged time that could host one
              {result.falseAlarms.perYear !== null ? ` (${result.falseAlarms.perYear.toFixed(2)} a year` : ''}
              {result.falseAlarms.perYear !== null && result.falseAlarms.interval ? `, 95 % interval ${result.falseAlarms.interval[0].toFixed(2)}–${result.falseAlarms.interval[1].toFixed(2)})` : result.falseAlarms.perYear !== null ? ')' : ''}
            </>
          ) : (
            'none could count: every judged instant lies within the horizon before a marked transition or within one window after it'
          )}
        </dd>
        {cal ? (
          <>
            <dt className="text-ink-soft">Surrogate false-alarm rate</dt>
            <dd className="num">
              {(cal.falseAlarmRate * 100).toFixed(1)} % of {cal.surrogates} {cal.method === 'ar1' ? 'AR(1)' : 'phase-randomised'} replays (95 % interval {(cal.interval[0] * 100).toFixed(1)}–{(cal.interval[1] * 100).toFixed(1)} %)
            </dd>
            {cal.falseAlarmsPerYear !== undefined ? (
              <>
                <dt className="text-ink-soft">Calibrated false alarms</dt>
                <dd className="num">
                  {cal.falseAlarmsPerYear === null ? '–' : `${cal.falseAlarmsPerYear.toFixed(2)} a year`}
                  {cal.falseAlarmsPerYearInterval ? ` (95 % interval ${cal.falseAlarmsPerYearInterval[0].toFixed(2)}–${cal.falseAlarmsPerYearInterval[1].toFixed(2)}, exact Poisson)` : ''} over{' '}
                  {yearsText(cal.judgedYears)} of judged replay time
                  {cal.notJudgedSteps ? `; ${cal.notJudgedSteps} replay instants not judged (cost bound)` : ''}
                </dd>
              </>
            ) : null}
          </>
        ) : null}
      </dl>

      <table className="w-full text-sm">
        <caption className="mb-1 text-left font-semibold">Lead times</caption>
        <thead>
          <tr className="border-b border-rule text-left text-ink-soft">
            <th className="py-1 pr-4">Transition</th>
            <th className="pr-4">First warning</th>
            <th className="pr-4">Lead time</th>
            <th>Highest τ threshold that warns ({word})</th>
          </tr>
        </thead>
        <tbody>
          {result.transitions.length === 0 ? (
            <tr>
              <td colSpan={4} className="py-2 text-ink-soft">No transitions are marked on this series; every alarm counts as false.</td>
            </tr>
          ) : (
            result.transitions.map((t) => (
              <tr key={`${t.at}`} className="border-b border-rule/50 align-top">
                <td className="py-1 pr-4">{formatLocal(t.at, timeZone)}{t.note ? <span className="block text-xs text-ink-soft">{t.note}</span> : null}</td>
                <td className="py-1 pr-4 whitespace-nowrap">{t.firstWarningAt !== null ? formatLocal(t.firstWarningAt, timeZone) : '–'}</td>
                <td className="num py-1 pr-4 whitespace-nowrap">{leadText(t.leadTimeMs)}</td>
                <td className="num py-1">{t.firingTau !== null ? formatTau(t.firingTau) : 'none'}</td>
              </tr>
            ))
          )}
        </tbody>
      </table>

      <ChartFrame
        title="Evidence over replay time"
        fileName="backtest-evidence"
        legend={`Kendall τ of the indicator with the data available at each instant, read ${word} (the way the rule looks); dashed: the rule's threshold`}
      >
        <TimeChart
          rows={rows}
          lines={[
            { key: 'tau', label: `τ ${word}`, color: '#1f6f8b' },
            { key: 'threshold', label: 'threshold', color: '#b45309', dashed: true, width: 1 },
          ]}
          timeZone={timeZone}
          transitions={result.transitions.map((t) => ({ at: t.at, note: t.note || 'marked transition' }))}
          zeroLine
        />
      </ChartFrame>
      <ChartFrame title="Kendall p over replay time" fileName="backtest-p" legend="descriptive only: it assumes independent values, which overlapping windows are not, so no rule is judged on it">
        <TimeChart rows={rows} lines={[{ key: 'p', label: 'p', color: '#475569' }]} timeZone={timeZone} transitions={result.transitions.map((t) => ({ at: t.at, note: t.note || 'marked transition' }))} height={160} />
      </ChartFrame>

      {cal ? (
        <ChartFrame
          title="Hit rate against false-alarm rate"
          fileName="backtest-roc"
          testId="backtest-roc"
          legend={`each point is one threshold on τ ${word}; hit rate: share of simulated approaches to a fold (fitted to the record before the first transition) warned of within the horizon; false-alarm rate: share of simulated records without one that alarm in the same stretch`}
        >
          <ResponsiveContainer width="100%" height={260}>
            <LineChart data={cal.roc.filter((p) => p.hitRate !== null).map((p) => ({ ...p }))} margin={{ top: 8, right: 16, bottom: 16, left: 8 }}>
              <CartesianGrid stroke="#e5e7eb" />
              <XAxis dataKey="falseAlarmRate" type="number" domain={[0, 1]} label={{ value: 'false-alarm rate', position: 'insideBottom', offset: -8 }} />
              <YAxis dataKey="hitRate" type="number" domain={[0, 1]} label={{ value: 'hit rate', angle: -90, position: 'insideLeft' }} />
              <Tooltip formatter={(v) => (typeof v === 'number' ? v.toFixed(3) : String(v))} labelFormatter={() => ''} />
              <Line dataKey="hitRate" stroke="#1f6f8b" dot={{ r: 3 }} isAnimationActive={false} />
              {cal.roc
                .filter((p) => p.threshold === pick && p.hitRate !== null)
                .map((p) => (
                  <ReferenceDot key="pick" x={p.falseAlarmRate} y={p.hitRate!} r={6} fill="#b45309" stroke="none" />
                ))}
            </LineChart>
          </ResponsiveContainer>
          {cal.approaches ? (
            <p className="mt-1 text-xs text-ink-soft">
              {cal.approaches.replicates} simulated records of each kind. Fitted lag-1 memory without a fold: {cal.approaches.nullModel.phiStart.toFixed(3)} throughout; towards a
              fold: {cal.approaches.foldModel.phiStart.toFixed(3)} at the start, {cal.approaches.foldModel.phiEnd.toFixed(3)} at the end.
            </p>
          ) : null}
        </ChartFrame>
      ) : null}

      {cal ? (
        <div className="flex flex-wrap items-end gap-3 text-sm">
          <label className="flex flex-col">
            τ threshold
            <select className="rounded border border-rule bg-card px-2 py-1" value={pick} onChange={(e) => setPick(Number(e.target.value))}>
              {cal.roc.map((p) => (
                <option key={p.threshold} value={p.threshold}>
                  τ {word} ≥ {p.threshold.toFixed(2)} — hits {p.hitRate === null ? '–' : `${Math.round(p.hitRate * 100)} %`}, false alarms {(p.falseAlarmRate * 100).toFixed(1)} %
                </option>
              ))}
            </select>
          </label>
          {canSave ? (
            <button type="button" className={primary} disabled={saving || pick === currentThreshold} onClick={() => onUse(pick)}>
              {saving ? 'Saving…' : 'Use this threshold'}
            </button>
          ) : null}
          {saved !== null ? <span role="status" className="text-calm">Saved τ ≥ {saved.toFixed(2)} into the rule.</span> : null}
          {currentThreshold !== null ? <span className="text-ink-soft">The rule now uses τ ≥ {formatTau(currentThreshold)}.</span> : null}
        </div>
      ) : null}

      {result.alarms.length ? (
        <details className="text-sm">
          <summary className="cursor-pointer">Alarm onsets ({result.alarms.length})</summary>
          <ul className="mt-1 space-y-0.5">
            {result.alarms.map((a) => (
              <li key={a.time} className="num">
                {formatLocal(a.time, timeZone)} · τ {formatTau(a.tau)} ({word}) · surrogate p {formatP(a.surrogateP)} ·{' '}
                {a.kind === 'warning' ? 'warning within the horizon before a transition' : a.kind === 'settling' ? 'just after a transition' : 'false alarm'}
              </li>
            ))}
          </ul>
        </details>
      ) : null}
      <details className="text-xs text-ink-soft">
        <summary className="cursor-pointer">How this was computed</summary>
        <p className="mt-1 max-w-3xl">{result.method}</p>
      </details>
      <p className="text-xs text-ink-soft">{result.caution}</p>
    </div>
  );
}
