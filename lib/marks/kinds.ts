/** What a mark on a series' record stands for (migrations 0008 and 0009); client-safe, so forms list the same kinds. */
export const MARK_KINDS = ['tipping-point', 'maintenance'] as const;
export type MarkKind = (typeof MARK_KINDS)[number];

/** How each kind reads on screen. */
export const MARK_KIND_LABELS: Record<MarkKind, string> = {
  'tipping-point': 'tipping point (scored by backtests)',
  maintenance: 'maintenance break (sensor swap, recalibration, cleaning)',
};
