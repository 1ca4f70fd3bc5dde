import type { TrendDirection } from '@/lib/engine/direction';
import type { SiteIndicatorName } from '@/lib/engine/site';

/**
 * Browser-safe shapes of a site-level snapshot (lib/sites/analysis.ts): what is stored, and the view the site page
 * and `GET /api/sites/{slug}/analysis` carry.
 */

export interface SiteMember {
  seriesId: number;
  slug: string;
  name: string;
  unit: string;
}

export interface SiteAnalysisSummary {
  /** grid points analysed (after detrending) */
  n: number;
  windowPoints: number;
  /** every how many windows the site indicators were evaluated (settings maxEvaluatedWindows) */
  evaluatedEvery: number;
  /** the common grid's step in ms: the coarsest member interval */
  interval: number;
  /** grid instants left out before the analysed stretch because some member had no reading near them */
  dropped: number;
  kendall: Record<SiteIndicatorName, { tau: number | null; p: number | null; direction: TrendDirection }>;
  /**
   * phase-coherent surrogate p in the indicator's direction (absent without surrogates); nullSd, the spread of the
   * surrogate taus, is absent on snapshots made before site rules
   */
  significance: Partial<Record<SiteIndicatorName, { p: number | null; count: number; method: 'phase'; direction: TrendDirection; nullSd?: number | null }>>;
  /** the value of the newest evaluated window */
  latest: Record<SiteIndicatorName, number | null>;
}

/** Curves thinned for the site page's charts: evaluated windows only (NaN between evaluations stays null). */
export interface SiteCurves {
  time: number[];
  indicators: Record<SiteIndicatorName, (number | null)[]>;
}

export interface SiteAnalysisView {
  /** none: not computed yet (or the site has fewer than two active series); error: the computation could not run */
  state: 'none' | 'ok' | 'error';
  /** ISO 8601 */
  computedAt: string | null;
  error: string | null;
  members: { used: SiteMember[]; leftOut: (SiteMember & { reason: string })[] };
  summary: SiteAnalysisSummary | null;
  curves: SiteCurves | null;
  dataFrom: number | null;
  dataTo: number | null;
}
