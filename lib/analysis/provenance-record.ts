/**
 * What a snapshot records about where its numbers came from (migration 0012). Client-safe: the alert page and the
 * report show it as it is stored.
 */
export interface SnapshotProvenance {
  /**
   * the series' data version the analysed rows are (lib/intake/data-versions.ts: one per intake run that stored new
   * or replaced values); absent on analyses stored before versions were counted (migration 0021)
   */
  dataVersion?: number;
  /** SHA-256 (hex) of the analysed observations in the canonical form named by `canonicalForm` */
  dataSha256: string;
  /** how the observations were written before hashing; see `canonicalObservationsCsv` */
  canonicalForm: 'brinkwatch-observations-csv-v1';
  /** rows analysed (before gridding) */
  rows: number;
  /** the ingest runs that last wrote those rows, oldest first */
  ingestRuns: number[];
  /** rows written by no recorded run (seeded, or stored before runs were recorded) */
  rowsWithoutRun: number;
  /** the engine's version (the package version) */
  engineVersion: string;
  /** the seed of the surrogates (also inside the settings) */
  seed: number;
  /** the sampling interval given to the engine (ms); null when the engine inferred it */
  intervalMs: number | null;
  /** the marks given to the engine as breaks */
  breaks: { time: number; kind: 'tipping-point' | 'maintenance' }[];
  /**
   * How the numbers were computed (absent on snapshots stored before incremental analysis): a full recomputation, or
   * an update of the analysis of snapshot `basedOnSnapshot` (lib/engine/update.ts), and why.
   */
  update?: { mode: 'full' | 'incremental'; reason: string; basedOnSnapshot: number | null };
}

/** The name a snapshot's download is saved under. */
export function analysisFileName(slug: string, snapshotId: number): string {
  return `${slug}-analysis-${snapshotId}.csv`;
}

/** The command a reviewer runs on the download to get the snapshot's numbers again. */
export function reproduceCommand(fileName: string): string {
  return `brinkwatch analyze ${fileName} --summary`;
}

/** A snapshot's provenance as a page shows it, with where to download its data and what to run on it. */
export interface ProvenanceView extends SnapshotProvenance {
  snapshotId: number;
  fileName: string;
  downloadHref: string;
  command: string;
}

export function provenanceView(snapshotId: number, slug: string, provenance: SnapshotProvenance): ProvenanceView {
  const fileName = analysisFileName(slug, snapshotId);
  return { ...provenance, snapshotId, fileName, downloadHref: `/api/snapshots/${snapshotId}/data.csv`, command: reproduceCommand(fileName) };
}
