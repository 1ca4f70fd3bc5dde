'use client';

import { ChartFrame } from '@/components/charts/ChartFrame';
import { TimeChart } from '@/components/charts/TimeChart';
import { CELL, DataTable } from '@/components/ui/DataTable';
import { formatLocal, formatP, formatTau } from '@/lib/display/format';
import type { BacktestResult } from '@/lib/backtest/run';
import { orientedTau, type TrendDirection } from '@/lib/engine/direction';
import { BacktestRoc } from './BacktestRoc';
import { directionWord, leadText, yearsText } from './wording';

/**
 * A finished backtest: what was replayed and judged, false alarms (and their calibration on surrogates), lead
 * times before each marked tipping point, the evidence over replay time, the ROC of the simulated approaches and the
 * alarm onsets. The standing caution is the page's; the method text says how it was computed.
 */
export function BacktestResults({
  result,
  timeZone,
  slug,
  ruleId,
  jobId,
  currentThreshold,
  canSave,
}: {
  result: BacktestResult;
  timeZone: string;
  slug: string;
  ruleId: number;
  jobId: number;
  currentThreshold: number | null;
  canSave: boolean;
}) {
  // results stored before directions existed read tau as rising
  const direction: TrendDirection = result.direction ?? 'rising';
  const word = directionWord(direction);
  const rows = result.evidence.time.map((t, i) => {
    const tau = result.evidence.tau[i];
    return { t, tau: tau === null ? null : orientedTau(tau, direction), p: result.evidence.p[i], threshold: result.threshold };
  });
  const marks = result.tippingPoints.map((t) => ({ at: t.at, note: t.note || 'marked tipping point' }));
  const cal = result.calibration;
  const judged = result.judged;
  return (
    <div className="mt-4 space-y-4">
      <dl className="grid grid-cols-2 gap-x-6 gap-y-1 text-sm sm:grid-cols-4">
        <dt className="text-ink-soft">Points replayed</dt>
        <dd className="num">
          {result.points} (judged every {result.every}, {result.steps} instants)
        </dd>
        <dt className="text-ink-soft">Window</dt>
        <dd className="num">
          {result.geometry.windowPoints} points, {result.geometry.detrend} detrending
        </dd>
        <dt className="text-ink-soft">τ read</dt>
        <dd data-testid="backtest-direction">
          {word} (threshold τ ≥ {formatTau(result.threshold)} in that direction)
        </dd>
        <dt className="text-ink-soft">Warning horizon</dt>
        <dd className="num" data-testid="backtest-horizon">
          {result.horizonMs !== undefined ? leadText(result.horizonMs) : 'since the previous tipping point'} before a tipping point
        </dd>
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
                    judged.belowCoverage
                      ? `${judged.belowCoverage} with under ${Math.round((judged.minCoverage ?? 0.8) * 100)} % observed points in the window`
                      : null,
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
              {result.falseAlarms.perYear !== null && result.falseAlarms.interval
                ? `, 95 % interval ${result.falseAlarms.interval[0].toFixed(2)}–${result.falseAlarms.interval[1].toFixed(2)})`
                : result.falseAlarms.perYear !== null
                  ? ')'
                  : ''}
            </>
          ) : (
            'none could count: every judged instant lies within the horizon before a marked tipping point or within one window after it'
          )}
        </dd>
        {cal ? (
          <>
            <dt className="text-ink-soft">Surrogate false-alarm rate</dt>
            <dd className="num">
              {(cal.falseAlarmRate * 100).toFixed(1)} % of {cal.surrogates} {cal.method === 'ar1' ? 'AR(1)' : 'phase-randomised'} replays (95 % interval{' '}
              {(cal.interval[0] * 100).toFixed(1)}–{(cal.interval[1] * 100).toFixed(1)} %)
            </dd>
            {cal.falseAlarmsPerYear !== undefined ? (
              <>
                <dt className="text-ink-soft">Calibrated false alarms</dt>
                <dd className="num">
                  {cal.falseAlarmsPerYear === null ? '–' : `${cal.falseAlarmsPerYear.toFixed(2)} a year`}
                  {cal.falseAlarmsPerYearInterval
                    ? ` (95 % interval ${cal.falseAlarmsPerYearInterval[0].toFixed(2)}–${cal.falseAlarmsPerYearInterval[1].toFixed(2)}, exact Poisson)`
                    : ''}{' '}
                  over {yearsText(cal.judgedYears)} of judged replay time
                  {cal.notJudgedSteps ? `; ${cal.notJudgedSteps} replay instants not judged (cost bound)` : ''}
                </dd>
              </>
            ) : null}
          </>
        ) : null}
      </dl>

      <DataTable
        caption="Lead times"
        showCaption
        frame="plain"
        columns={['Tipping point', 'First warning', 'Lead time', `Highest τ threshold that warns (${word})`]}
      >
        {result.tippingPoints.length === 0 ? (
          <tr>
            <td colSpan={4} className={`${CELL} text-ink-soft`}>
              No tipping points are marked on this series; every alarm counts as false.
            </td>
          </tr>
        ) : (
          result.tippingPoints.map((t) => (
            <tr key={`${t.at}`} className="align-top">
              <td className={CELL}>
                {formatLocal(t.at, timeZone)}
                {t.note ? <span className="block text-xs text-ink-soft">{t.note}</span> : null}
              </td>
              <td className={`${CELL} whitespace-nowrap`}>{t.firstWarningAt !== null ? formatLocal(t.firstWarningAt, timeZone) : '–'}</td>
              <td className={`num ${CELL} whitespace-nowrap`}>{leadText(t.leadTimeMs)}</td>
              <td className={`num ${CELL}`}>{t.firingTau !== null ? formatTau(t.firingTau) : 'none'}</td>
            </tr>
          ))
        )}
      </DataTable>

      <ChartFrame
        title="Evidence over replay time"
        fileName="backtest-evidence"
        legend={`Kendall τ of the indicator with the data available at each instant, read ${word} (the way the rule looks); dashed: the rule's threshold`}
      >
        <TimeChart
          rows={rows}
          lines={[
            { key: 'tau', label: `τ ${word}`, color: 'tide' },
            { key: 'threshold', label: 'threshold', color: 'watch', dashed: true, width: 1 },
          ]}
          timeZone={timeZone}
          marks={marks}
          zeroLine
        />
      </ChartFrame>
      <ChartFrame
        title="Kendall p over replay time"
        fileName="backtest-p"
        legend="descriptive only: it assumes independent values, which overlapping windows are not, so no rule is judged on it"
      >
        <TimeChart rows={rows} lines={[{ key: 'p', label: 'p', color: 'ink-soft' }]} timeZone={timeZone} marks={marks} height={160} />
      </ChartFrame>

      {cal ? (
        <BacktestRoc
          calibration={cal}
          word={word}
          initialThreshold={result.threshold}
          slug={slug}
          ruleId={ruleId}
          jobId={jobId}
          currentThreshold={currentThreshold}
          canSave={canSave}
        />
      ) : null}

      {result.alarms.length ? (
        <details className="text-sm">
          <summary className="cursor-pointer">Alarm onsets ({result.alarms.length})</summary>
          <ul className="mt-1 space-y-0.5">
            {result.alarms.map((a) => (
              <li key={a.time} className="num">
                {formatLocal(a.time, timeZone)} · τ {formatTau(a.tau)} ({word}) · surrogate p {formatP(a.surrogateP)} ·{' '}
                {a.kind === 'warning'
                  ? 'warning within the horizon before a tipping point'
                  : a.kind === 'settling'
                    ? 'just after a tipping point'
                    : 'false alarm'}
              </li>
            ))}
          </ul>
        </details>
      ) : null}
      <details className="text-xs text-ink-soft">
        <summary className="cursor-pointer">How this was computed</summary>
        <p className="mt-1 max-w-3xl">{result.method}</p>
      </details>
    </div>
  );
}
