import { LocalTime } from '@/components/LocalTime';
import { Empty } from '@/components/States';
import type { AnalysisView } from '@/lib/analysis/view';
import type { IntakeRunSummary } from '@/lib/workbench';

const RUN_STATUS: Record<string, string> = { succeeded: '✓ taken in', rejected: '✕ rejected', failed: '✕ failed', running: '… running' };

/** Gaps, filled points and rejected rows behind the current analysis, and the latest intake runs. */
export function QualityPanel({ quality, runs, rejectedRows, extent, timeZone }: {
  quality: AnalysisView['quality'];
  runs: IntakeRunSummary[];
  rejectedRows: number;
  extent: { count: number; first: number | null; last: number | null };
  timeZone: string;
}) {
  return (
    <div className="space-y-3 text-sm">
      <dl className="num grid grid-cols-2 gap-x-4 gap-y-1">
        <dt className="text-ink-soft">Stored observations</dt><dd>{extent.count.toLocaleString('en')}</dd>
        <dt className="text-ink-soft">First / last</dt>
        <dd><LocalTime t={extent.first} timeZone={timeZone} /> / <LocalTime t={extent.last} timeZone={timeZone} /></dd>
        <dt className="text-ink-soft">Rows rejected at intake</dt><dd>{rejectedRows.toLocaleString('en')}</dd>
        {quality ? (
          <>
            <dt className="text-ink-soft">Points filled by interpolation</dt><dd>{quality.filledPoints}</dd>
            <dt className="text-ink-soft">Intervals averaged (several values)</dt><dd>{quality.binnedBins}</dd>
            <dt className="text-ink-soft">Left out (ends, before span)</dt><dd>{quality.trimmedEnds + quality.droppedBeforeSpan + quality.droppedBeforeStretch}</dd>
          </>
        ) : null}
      </dl>
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
                <span aria-hidden="true">{g.filled ? '≈' : '✕'}</span> <LocalTime t={g.from} timeZone={timeZone} /> – <LocalTime t={g.to} timeZone={timeZone} />:{' '}
                {g.points} point{g.points === 1 ? '' : 's'} {g.filled ? 'filled' : 'not filled'}
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
                <span className="text-ink-soft">{r.source}{r.fileName ? ` · ${r.fileName}` : ''}</span>
                <span className="num text-ink-soft">+{r.accepted} · {r.duplicates} dup · {r.rejected} rejected</span>
              </li>
            ))}
          </ul>
        )}
      </div>
    </div>
  );
}
