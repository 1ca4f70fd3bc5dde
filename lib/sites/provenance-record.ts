/**
 * What a site snapshot records about where its numbers came from (migration 0025). Client-safe: the alert page shows
 * it as it is stored.
 */

/** The common grid a site analysis was given: its instants (UTC ms) and one column of values per member, in order. */
export interface SiteGrid {
  time: number[];
  values: number[][];
}

export interface SiteSnapshotProvenance {
  /** SHA-256 (hex) of the grid in the canonical form named by `canonicalForm` */
  dataSha256: string;
  /** how the grid was written before hashing; see `canonicalGridCsv` in lib/sites/provenance.ts */
  canonicalForm: 'brinkwatch-site-grid-csv-v1';
  /** instants of the grid */
  instants: number;
  /** the grid step given to the engine (ms): the coarsest member interval */
  intervalMs: number;
  /** the member series in column order, each with the data version of its record when the grid was read */
  members: { slug: string; dataVersion: number }[];
  /** the engine's version (the package version) */
  engineVersion: string;
  /** the seed of the phase-coherent surrogates (also inside the settings) */
  seed: number;
}

/** The name a site snapshot's download is saved under. */
export function siteAnalysisFileName(siteSlug: string, snapshotId: number): string {
  return `${siteSlug}-site-analysis-${snapshotId}.csv`;
}

/** The command a reviewer runs on the download to get the site snapshot's numbers again. */
export function siteReproduceCommand(fileName: string, columns: readonly string[]): string {
  return `brinkwatch analyze ${fileName} --multivariate --value ${columns.join(',')} --summary`;
}

/** A site snapshot's provenance as a page shows it, with where to download its grid and what to run on it. */
export interface SiteProvenanceView extends SiteSnapshotProvenance {
  siteSnapshotId: number;
  fileName: string;
  downloadHref: string;
  command: string;
}

export function siteProvenanceView(siteSnapshotId: number, siteSlug: string, provenance: SiteSnapshotProvenance): SiteProvenanceView {
  const fileName = siteAnalysisFileName(siteSlug, siteSnapshotId);
  return {
    ...provenance,
    siteSnapshotId,
    fileName,
    downloadHref: `/api/site-snapshots/${siteSnapshotId}/data.csv`,
    command: siteReproduceCommand(
      fileName,
      provenance.members.map((m) => m.slug),
    ),
  };
}
