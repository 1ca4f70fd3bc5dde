import type { ReactNode } from 'react';
import { LocalTime } from '@/components/LocalTime';
import { Empty } from '@/components/States';
import { indicatorLabel } from '@/lib/display/analysis-labels';
import { formatP } from '@/lib/display/format';
import { describeCalibration, tauThreshold, tauWithDirection } from '@/lib/alerts/wording';
import type { RuleRecord, RuleStanding, RuleStatus } from '@/lib/alerts/rules';

export const STANDING_WORDS: Record<RuleStanding, string> = {
  met: 'met',
  building: 'passing, not yet persistent',
  'not-met': 'not met',
  'cannot-judge': 'could not be judged',
  'not-yet-judged': 'not judged yet',
};

/** A rule's tests in one line, e.g. "lag-1 autocorrelation: tau ≥ 0.30 (rising), surrogate p ≤ 0.05". */
function ruleSummary(
  rule: Pick<RuleRecord, 'indicator' | 'minTau' | 'direction' | 'maxSurrogateP' | 'fdrLevel' | 'levelThreshold' | 'levelDirection' | 'persistence'>,
): string {
  return (
    `${indicatorLabel(rule.indicator)}: ${tauThreshold(rule.minTau, rule.direction)}` +
    (rule.maxSurrogateP !== null ? `, surrogate p ≤ ${rule.maxSurrogateP}` : '') +
    (rule.fdrLevel !== null ? `, q ≤ ${rule.fdrLevel}` : '') +
    (rule.levelThreshold !== null ? `, latest ${rule.levelDirection === 'below' ? '≤' : '≥'} ${rule.levelThreshold}` : '') +
    (rule.persistence > 1 ? `, ${rule.persistence} analyses in a row` : '')
  );
}

/**
 * The series' rules with how each stood at its latest judgement: a rule that could not be judged says why (failed
 * analysis, windows below the coverage floor, no surrogate p), with its calibrated false-alarm rate and warnings.
 * `actions` adds a lead's controls to each rule.
 */
export function RuleList({ statuses, timeZone, actions }: { statuses: RuleStatus[]; timeZone: string; actions?: (rule: RuleRecord) => ReactNode }) {
  return (
    <>
      {statuses.length === 0 ? (
        <Empty>This series has no alert rules.</Empty>
      ) : (
        <ul className="space-y-3 text-sm" data-testid="rule-statuses">
          {statuses.map(({ rule, standing, latest }) => (
            <li key={rule.id} className="border-l-2 border-rule pl-3" data-rule={rule.id} data-standing={standing}>
              <div className="flex flex-wrap items-baseline gap-2">
                <span className="font-medium">
                  #{rule.id} {ruleSummary(rule)} · {rule.severity}
                  {rule.active ? '' : ' · paused'}
                </span>
                {actions ? <span className="ml-auto flex gap-1">{actions(rule)}</span> : null}
              </div>
              <div className={standing === 'cannot-judge' ? 'font-medium text-warning' : 'text-ink-soft'}>
                Latest: {STANDING_WORDS[standing]}
                {latest ? (
                  <>
                    {' '}
                    (<LocalTime t={latest.at} timeZone={timeZone} />)
                  </>
                ) : null}
                {latest && standing !== 'met' && standing !== 'building' ? ` — ${latest.outcome.replace(/^(cannot-judge|not-met): /, '')}` : ''}
              </div>
              {latest && standing !== 'cannot-judge' ? (
                <div className="num text-xs text-ink-soft">
                  τ {tauWithDirection(latest.tau, latest.direction)} · surrogate p {formatP(latest.surrogateP)}
                  {latest.qValue !== null ? ` · q ${formatP(latest.qValue)}` : ''}
                </div>
              ) : null}
              <div className="text-xs text-ink-soft">False alarms: {describeCalibration(rule.calibration)}</div>
              {rule.warnings.map((w) => (
                <p key={w} className="text-xs text-warning">
                  {w}
                </p>
              ))}
            </li>
          ))}
        </ul>
      )}
    </>
  );
}
