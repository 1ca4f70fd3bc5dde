import { orientedTau, type TrendDirection } from '@/lib/engine/direction';
import { surrogatePValue } from '@/lib/engine/surrogates';

/** The parts of a stored snapshot summary that rules and messages read (see lib/analysis/snapshot.ts). */
export interface StoredSummary {
  windowPoints?: number;
  bandwidthPoints?: number | null;
  /** sampling interval in the unit of the series' times */
  interval?: number;
  /** p is one-sided in `direction` (two-sided for 'two-sided'); descriptive only. Snapshots before directions: upwards. */
  kendall?: Record<string, { tau: number | null; p: number | null; direction?: TrendDirection } | undefined>;
  /** p in `direction`; nullSd = standard deviation of the finite surrogate taus (the null spread of tau). */
  significance?: Record<
    string,
    { p: number | null; count: number; method: string; direction?: TrendDirection; nullSd?: number | null; nullCount?: number } | undefined
  >;
  latest?: Record<string, { time: number; value: number } | null | undefined>;
  shifts?: { time: number; index: number; size?: number }[];
  stretch?: { from: number; to: number; startsAfter: string };
  quality?: { windowsBelowCoverage?: number; coverage?: number };
}

/**
 * The facts about one indicator in a snapshot, seen in `direction`: tau (raw) and its oriented value, the surrogate
 * p in that direction, the null spread, the latest value. The stored surrogate p is in the indicator's own
 * direction (summary.significance[ind].direction, upwards for snapshots from before directions); a rule looking
 * another way gets its p recomputed from the stored surrogate taus (`taus`, read from the snapshot's curves), or
 * none when they are not at hand. O(1), or O(N) for N surrogate taus.
 */
export function indicatorFacts(summary: StoredSummary, indicator: string, direction: TrendDirection = 'rising', taus?: number[] | null) {
  const kendall = summary.kendall?.[indicator];
  const significance = summary.significance?.[indicator];
  const tau = kendall?.tau ?? null;
  const storedDirection = significance?.direction ?? 'rising';
  let surrogateP = significance?.p ?? null;
  let surrogateCount = significance?.count ?? 0;
  if (significance && storedDirection !== direction) {
    const recomputed =
      tau !== null && taus
        ? surrogatePValue(
            orientedTau(tau, direction),
            Float64Array.from(taus, (t) => orientedTau(t ?? Number.NaN, direction)),
          )
        : null;
    surrogateP = recomputed?.p ?? null;
    surrogateCount = recomputed?.count ?? surrogateCount;
  }
  return {
    computed: kendall !== undefined,
    direction,
    tau,
    orientedTau: tau === null ? null : orientedTau(tau, direction),
    kendallP: kendall?.p ?? null,
    kendallDirection: kendall?.direction ?? 'rising',
    surrogateTested: significance !== undefined,
    /** the p in `direction` needs the surrogate taus, which were not at hand */
    needsTaus: significance !== undefined && storedDirection !== direction && !taus,
    surrogateP,
    surrogateCount,
    surrogateMethod: significance?.method ?? null,
    nullSd: significance?.nullSd ?? null,
    level: summary.latest?.[indicator]?.value ?? null,
  };
}
