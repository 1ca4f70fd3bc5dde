import { LocalTime } from '@/components/LocalTime';
import { Empty } from '@/components/States';
import type { AnalysisView } from '@/lib/analysis/view';
import type { IngestRunRecord } from '@/lib/intake/run-record';
import { stretchReason } from '@/lib/display/analysis-labels';
import { formatValue } from '@/lib/display/format';

const RUN_STATUS: Record<string, string> = { succeeded: '✓ taken in', rejected: '✕ rejected', failed: '✕ failed', running: '… running' };

const HANDLING: Record<string, string> = {
  'start-after': 'the analysis starts after the change',
  subsample: 'the finer part was subsampled to the coarser interval (not averaged, which would change the variance)',
};

const plural = (k: number, word: string) => `${k.toLocaleString('en')} ${word}${k === 1 ? '' : 's'}`;

/** An interval in ms as the coarsest whole unit that fits ("1 d", "6 h", "15 min", "30 s"). */
function formatInterval(ms: number): string {
  for (const [unit, size] of [
    ['d', 86_400_000],
    ['h', 3_600_000],
    ['min', 60_000],
    ['s', 1000],
  ] as const) {
    if (ms >= size) return `${formatValue(ms / size)} ${unit}`;
  }
  return `${formatValue(ms)} ms`;
}

/**
 * What the current analysis stands on: the analysed stretch and why it starts there, detected abrupt shifts,
 * coverage by observed points (and windows not judged for lack of it), stuck-sensor runs, sampling changes and
 * how they were handled, gaps, filled points and rejected rows; then the latest intake runs.
 */
export function QualityPanel({
  quality,
  stretch = null,
  shifts = [],
  runs,
  rejectedRows,
  extent,
  timeZone,
}: {
  quality: AnalysisView['quality'];
  stretch?: AnalysisView['stretch'];
  shifts?: AnalysisView['shifts'];
  runs: IngestRunRecord[];
  rejectedRows: number;
  extent: { count: number; first: number | null; last: number | null };
  timeZone: string;
}) {
  return (
    <div className="space-y-3 text-sm">
      <dl className="num grid grid-cols-2 gap-x-4 gap-y-1">
        <dt className="text-ink-soft">Stored observations</dt>
        <dd>{extent.count.toLocaleString('en')}</dd>
        <dt className="text-ink-soft">First / last</dt>
        <dd>
          <LocalTime t={extent.first} timeZone={timeZone} /> / <LocalTime t={extent.last} timeZone={timeZone} />
        </dd>
        <dt className="text-ink-soft">Rows rejected at intake</dt>
        <dd>{rejectedRows.toLocaleString('en')}</dd>
        {stretch ? (
          <>
            <dt className="text-ink-soft">Analysed stretch</dt>
            <dd data-testid="quality-stretch">
              <LocalTime t={stretch.from} timeZone={timeZone} /> – <LocalTime t={stretch.to} timeZone={timeZone} />, {stretchReason(stretch.startsAfter)}
            </dd>
          </>
        ) : null}
        {quality ? (
          <>
            {quality.coverage !== undefined ? (
              <>
                <dt className="text-ink-soft">Observed share of the stretch</dt>
                <dd data-testid="quality-coverage">{Math.round(quality.coverage * 1000) / 10}%</dd>
              </>
            ) : null}
            {quality.windowsBelowCoverage !== undefined ? (
              <>
                <dt className="text-ink-soft">Windows not judged (too few observed points)</dt>
                <dd>{quality.windowsBelowCoverage.toLocaleString('en')}</dd>
              </>
            ) : null}
            <dt className="text-ink-soft">Points filled by interpolation</dt>
            <dd>{quality.filledPoints}</dd>
            <dt className="text-ink-soft">Intervals averaged (several values)</dt>
            <dd>{quality.binnedBins}</dd>
            <dt className="text-ink-soft">Left out (ends, before span)</dt>
            <dd>{quality.trimmedEnds + quality.droppedBeforeSpan + quality.droppedBeforeStretch}</dd>
          </>
        ) : null}
      </dl>
      {quality || shifts.length ? (
        <div data-testid="quality-findings">
          <h3 className="font-medium">Shifts, stuck sensor, sampling</h3>
          <ul className="mt-1 max-h-40 space-y-0.5 overflow-y-auto">
            {shifts.length === 0 ? (
              <li className="text-ink-soft">No abrupt shift of level detected.</li>
            ) : (
              shifts.map((shift) => (
                <li key={`shift-${shift.time}`}>
                  <span aria-hidden="true">⇵</span> Abrupt shift of level from <LocalTime t={shift.time} timeZone={timeZone} />
                </li>
              ))
            )}
            {quality?.flatRuns === undefined ? null : quality.flatRuns.length === 0 ? (
              <li className="text-ink-soft">No runs of exactly constant readings.</li>
            ) : (
              quality.flatRuns.map((run) => (
                <li key={`flat-${run.from}`}>
                  <span aria-hidden="true">▬</span> {plural(run.points, 'identical reading')} <LocalTime t={run.from} timeZone={timeZone} /> –{' '}
                  <LocalTime t={run.to} timeZone={timeZone} />: a stuck sensor? Windows inside it give no indicators.
                </li>
              ))
            )}
            {quality?.samplingChanges === undefined ? null : quality.samplingChanges.length === 0 ? (
              <li className="text-ink-soft">No change of sampling interval.</li>
            ) : (
              quality.samplingChanges.map((change) => (
                <li key={`sampling-${change.time}`}>
                  <span aria-hidden="true">⟂</span> Sampling changes at <LocalTime t={change.time} timeZone={timeZone} /> from every{' '}
                  {formatInterval(change.before)} to every {formatInterval(change.after)}
                  {quality.samplingHandling ? `: ${HANDLING[quality.samplingHandling] ?? quality.samplingHandling}` : ''}.
                </li>
              ))
            )}
          </ul>
        </div>
      ) : null}
      <div>
        <h3 className="font-medium">Gaps in the record</h3>
        {!quality ? (
          <p className="text-ink-soft">Shown once the series has been analysed.</p>
        ) : quality.gaps.length === 0 ? (
          <p className="text-ink-soft">No missing sampling intervals.</p>
        ) : (
          <ul className="mt-1 max-h-40 space-y-0.5 overflow-y-auto">
            {quality.gaps.slice(0, 50).map((g) => (
              <li key={g.from}>
                <span aria-hidden="true">{g.filled ? '≈' : '✕'}</span> <LocalTime t={g.from} timeZone={timeZone} /> – <LocalTime t={g.to} timeZone={timeZone} />
                : {g.points} point{g.points === 1 ? '' : 's'} {g.filled ? 'filled' : 'not filled'}
              </li>
            ))}
          </ul>
        )}
      </div>
      <div>
        <h3 className="font-medium">Latest intake runs</h3>
        {runs.length === 0 ? (
          <Empty>No intake runs for this series yet.</Empty>
        ) : (
          <ul className="mt-1 space-y-1">
            {runs.map((r) => (
              <li key={r.id} className="flex flex-wrap gap-x-2">
                <LocalTime t={r.startedAt} timeZone={timeZone} />
                <span>{RUN_STATUS[r.status] ?? r.status}</span>
                <span className="text-ink-soft">
                  {r.source}
                  {r.fileName ? ` · ${r.fileName}` : ''}
                </span>
                <span className="num text-ink-soft">
                  +{r.accepted} · {r.duplicates} dup · {r.rejected} rejected
                </span>
              </li>
            ))}
          </ul>
        )}
      </div>
    </div>
  );
}
