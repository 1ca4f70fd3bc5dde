// Client-safe (type imports only): the series page's data versions panel shows these shapes.
import type { IndicatorName } from '@/lib/engine/settings';
import type { TrendDirection } from '@/lib/engine/direction';
import type { DataVersionRecord } from '@/lib/intake/data-versions';

/** One indicator's trend in an analysis: Kendall's tau with its p, and the surrogate p when surrogates ran. */
export interface IndicatorTrendLine {
  name: IndicatorName;
  direction: TrendDirection | null;
  tau: number | null;
  kendallP: number | null;
  surrogateP: number | null;
}

/** A re-analysis of a series on a data version, as the API and the series page carry it (times as ISO 8601). */
export interface ReanalysisRecord {
  id: number;
  dataVersion: number;
  /** the version is the series' current one (when this answer was made) */
  onCurrentVersion: boolean;
  status: 'ok' | 'error';
  error: string | null;
  n: number;
  dataFrom: number | null;
  dataTo: number | null;
  dataSha256: string;
  createdAt: string;
  requestedBy: number | null;
  trends: IndicatorTrendLine[];
  /** the newest live analysis that read the same data (same version and hash), for comparison; null when none */
  sameDataAsSnapshot: number | null;
}

/** The data versions of a series, the version its live evidence read, and its re-analyses. */
export interface DataVersionsOverview {
  currentVersion: number;
  /** the data version the latest live analysis read (null before versions were counted or before any analysis) */
  liveSnapshot: { id: number; dataVersion: number | null; trends: IndicatorTrendLine[] } | null;
  versions: DataVersionRecord[];
  reanalyses: ReanalysisRecord[];
}
