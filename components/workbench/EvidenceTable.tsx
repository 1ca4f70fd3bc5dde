import { Empty, Panel } from '@/components/States';
import { STANDING_WORDS } from '@/components/rules/RuleList';
import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import { tauThreshold, tauWithDirection } from '@/lib/alerts/wording';
import { formatDirection, indicatorLabel } from '@/lib/display/analysis-labels';
import { formatP } from '@/lib/display/format';
import type { EvidenceRow } from '@/lib/series/evidence';

const STANDING_TONE: Record<string, string> = { met: 'font-medium text-warning', building: 'text-watch', 'cannot-judge': 'text-warning' };

/**
 * The verdict of the saved analysis at a glance, before any chart: one row per indicator with the direction it is
 * read in, its trend (τ) and surrogate p in that direction, and each rule it feeds with what that rule said at its
 * latest judgement.
 */
export function EvidenceTable({ rows }: { rows: EvidenceRow[] }) {
  return (
    <Panel title="Evidence" id="evidence">
      {rows.length === 0 ? (
        <Empty>No analysis and no rules yet: the table fills in after the first analysis run.</Empty>
      ) : (
        <DataTable
          caption="Each indicator's trend and the rules it feeds"
          frame="plain"
          testId="evidence-table"
          columns={['Indicator', 'Read as', 'Trend τ', 'Surrogate p', 'Rules it feeds, and what they say now']}
        >
          {rows.map((row) => (
            <tr key={row.indicator} className="border-b border-rule align-top last:border-0" data-indicator={row.indicator}>
              <th scope="row" className={`${CELL_TIGHT} text-left font-medium`}>
                {row.computed ? (
                  <a className="text-tide hover:underline" href={`#chart-${row.indicator}`}>
                    {indicatorLabel(row.indicator, 'title')}
                  </a>
                ) : (
                  indicatorLabel(row.indicator, 'title')
                )}
              </th>
              <td className={`${CELL_TIGHT} whitespace-nowrap`}>{formatDirection(row.direction)}</td>
              <td className={`${CELL_TIGHT} num whitespace-nowrap`}>{row.computed ? tauWithDirection(row.tau, row.direction) : 'not computed'}</td>
              <td className={`${CELL_TIGHT} num whitespace-nowrap`}>
                {row.surrogates ? `${formatP(row.surrogateP)} (${row.surrogates})` : 'no surrogates'}
                {row.surrogates > 0 && row.surrogatesDrawnBefore > 0 ? (
                  <span className="block text-xs text-ink-soft" data-testid="surrogates-kept">
                    surrogates drawn {row.surrogatesDrawnBefore} point{row.surrogatesDrawnBefore === 1 ? '' : 's'} ago
                  </span>
                ) : null}
              </td>
              <td className={CELL_TIGHT}>
                {row.rules.length === 0 ? (
                  <span className="text-ink-faint">none</span>
                ) : (
                  <ul className="space-y-0.5">
                    {row.rules.map((r) => (
                      <li key={r.id} data-rule={r.id}>
                        <a className="text-tide hover:underline" href="#rules">
                          #{r.id}
                        </a>{' '}
                        <span className="text-ink-soft">
                          {tauThreshold(r.rule.minTau, r.rule.direction)}
                          {r.rule.maxSurrogateP !== null ? `, p ≤ ${r.rule.maxSurrogateP}` : ''} · {r.severity}
                        </span>{' '}
                        {r.active ? (
                          <span className={STANDING_TONE[r.standing] ?? 'text-ink-soft'}>— {STANDING_WORDS[r.standing]}</span>
                        ) : (
                          <span className="text-ink-faint">— paused</span>
                        )}
                      </li>
                    ))}
                  </ul>
                )}
              </td>
            </tr>
          ))}
        </DataTable>
      )}
    </Panel>
  );
}
