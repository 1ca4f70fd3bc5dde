import type { RuleCreateInput } from '@/lib/schemas/rule';

/**
 * Starting points for the rule editor: common early-warning rules written once, each a complete rule body that
 * passes `ruleCreateSchema` (tests/rules/templates.test.ts checks every one). A lead picks one and adjusts it. Pure;
 * browser-safe (type imports only).
 *
 * The indicators and their directions under critical slowing down — variance and lag-1 autocorrelation rise, the
 * recovery rate falls — are those of Scheffer et al. (2009), Nature 461, 53–59 and Dakos et al. (2012), PLoS ONE 7,
 * e41010 (from memory). The numbers (tau 0.3, p 0.05, q 0.1) are common practice, not calibrated values: the
 * rule's own calibration (false alarms per year) is computed after it is saved.
 */
export interface RuleTemplate {
  key: string;
  /** what the template is called in the editor's menu */
  title: string;
  /** one sentence on when to use it */
  summary: string;
  rule: RuleCreateInput;
}

const base = {
  minTau: 0.3,
  maxKendallP: null,
  levelThreshold: null,
  levelDirection: 'above',
  persistence: 1,
  severity: 'watch',
  quietPeriodHours: 0,
  fdrLevel: null,
  active: true,
} as const;

export const RULE_TEMPLATES: readonly RuleTemplate[] = [
  {
    key: 'ac1-rising',
    title: 'Lag-1 autocorrelation rising, surrogate p ≤ 0.05',
    summary: 'The classic sign of slowing down: each value resembles the one before more and more. Tested against surrogates of this series.',
    rule: { ...base, indicator: 'ac1', direction: 'rising', maxSurrogateP: 0.05 },
  },
  {
    key: 'variance-rising',
    title: 'Variance rising, surrogate p ≤ 0.05',
    summary: 'Fluctuations around the trend grow as the system recovers more slowly from each disturbance.',
    rule: { ...base, indicator: 'variance', direction: 'rising', maxSurrogateP: 0.05 },
  },
  {
    key: 'recovery-falling',
    title: 'Recovery rate falling, surrogate p ≤ 0.05',
    summary: 'The estimated rate at which the series returns towards its trend after a disturbance declines.',
    rule: { ...base, indicator: 'recovery', direction: 'falling', maxSurrogateP: 0.05 },
  },
  {
    key: 'ac1-persistent-warning',
    title: 'Lag-1 autocorrelation rising for three analyses, warning',
    summary: 'A stricter warning: the trend must pass in three analyses in a row, with a week of quiet after a dismissal.',
    rule: { ...base, indicator: 'ac1', direction: 'rising', minTau: 0.5, maxSurrogateP: 0.05, persistence: 3, severity: 'warning', quietPeriodHours: 168 },
  },
  {
    key: 'ac1-high-level',
    title: 'Lag-1 autocorrelation rising and above 0.9',
    summary: 'A rising trend that has also reached a high level: the latest window’s autocorrelation is at least 0.9.',
    rule: { ...base, indicator: 'ac1', direction: 'rising', maxSurrogateP: 0.05, levelThreshold: 0.9, levelDirection: 'above' },
  },
  {
    key: 'variance-portfolio',
    title: 'Variance rising, false discoveries controlled across all series',
    summary: 'For programmes watching many series: the surrogate p-values of all rules that set a level are judged together (Benjamini–Hochberg, q ≤ 0.1).',
    rule: { ...base, indicator: 'variance', direction: 'rising', maxSurrogateP: null, fdrLevel: 0.1 },
  },
];
