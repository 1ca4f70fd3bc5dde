/**
 * Each field of a rule explained in plain words, as the rule editor shows it under the field. Written once here so
 * the editor and its read-only view say the same. Browser-safe.
 */
export const RULE_FIELD_HELP = {
  indicator:
    'The statistic watched in a rolling window over the detrended record. Lag-1 autocorrelation and variance rise, and the recovery rate falls, as a system slows down near a tipping point.',
  direction: 'Which way the indicator’s trend must go for the rule to pass. “Either way” tests the size of the trend whatever its sign.',
  minTau:
    'The smallest Kendall rank correlation (τ) between the indicator and time, seen in the chosen direction: 0 means no trend, 1 a steady rise (or fall) in every window.',
  maxSurrogateP:
    'How often surrogate series — copies of this record that keep its noise but have no slowing down — show a trend at least this strong. Leave empty to skip the test; 0.05 is common practice.',
  levelThreshold: 'Optional: the indicator’s latest value must also be at or above (or at or below) this number, e.g. lag-1 autocorrelation ≥ 0.9.',
  persistence: 'How many analyses in a row must pass before an alert opens. More means fewer, later alerts.',
  severity: '“Watch” asks for attention; “warning” marks the alert as more urgent in queues and e-mails.',
  quietPeriodHours:
    'After an alert of this rule is dismissed or confirmed, no new alert opens for this many hours unless the evidence is clearly stronger. 0 means no quiet period.',
  fdrLevel:
    'Optional: judge this rule’s surrogate p together with every other rule that sets a level, across all series, so that on average at most this share of alerts are false discoveries (Benjamini–Hochberg). Leave empty to judge this series alone.',
  active: 'A paused rule is kept, with its history, but not judged and raises no alerts.',
} as const;
