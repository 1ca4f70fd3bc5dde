import { Site, SiteSnapshot, db } from '@/models';
import { ANALYSIS_CAUTION } from '@/lib/engine';
import { ENGINE_VERSION } from '@/lib/engine/version';
import { formatInstant } from '@/lib/intake/time-formats';
import { ConflictError, NotFoundError } from '@/lib/http/errors';
import { sha256Hex } from '@/lib/analysis/provenance';
import { siteAnalysisFileName, siteReproduceCommand, type SiteGrid, type SiteSnapshotProvenance } from './provenance-record';

/**
 * The canonical form of a site analysis's grid, the text its SHA-256 is taken over: the header `time,` and the
 * member slugs in column order, then one line per grid instant, the instant as ISO 8601 UTC with milliseconds
 * (`formatInstant`) and each value as ECMAScript's shortest decimal that reads back to the same double
 * (Number::toString, ECMA-262 §6.1.6.1.20), comma-separated, each line ended by `\n`; UTF-8. It is also the body
 * of the download, so `grep -v '^#' FILE | sha256sum` checks a download. O(n·k).
 */
export function canonicalGridCsv(columns: readonly string[], time: ArrayLike<number>, values: readonly ArrayLike<number>[]): string {
  const lines = [`time,${columns.join(',')}`];
  for (let i = 0; i < time.length; i++) lines.push(`${formatInstant(time[i])},${values.map((column) => String(column[i])).join(',')}`);
  return `${lines.join('\n')}\n`;
}

/** The grid as stored (plain arrays) and its provenance, for a site snapshot about to be stored. O(n·k). */
export function siteProvenanceOf(
  grid: { interval: number; time: Float64Array; values: Float64Array[] },
  members: { slug: string; dataVersion: number }[],
  seed: number,
): { grid: SiteGrid; provenance: SiteSnapshotProvenance } {
  const stored: SiteGrid = { time: Array.from(grid.time), values: grid.values.map((column) => Array.from(column)) };
  return {
    grid: stored,
    provenance: {
      dataSha256: sha256Hex(
        canonicalGridCsv(
          members.map((m) => m.slug),
          stored.time,
          stored.values,
        ),
      ),
      canonicalForm: 'brinkwatch-site-grid-csv-v1',
      instants: stored.time.length,
      intervalMs: grid.interval,
      members,
      engineVersion: ENGINE_VERSION,
      seed,
    },
  };
}

/**
 * The grid a site analysis saw, for a reviewer: `#` lines first — the settings as `# settings: {...}` and each
 * column's own detrending and the grid step as `# site: {...}` (both applied by the command line's --multivariate,
 * so the command on the `# reproduce:` line gives the snapshot's numbers again), the provenance and the caution —
 * then the grid in its canonical form. The grid is the one stored with the snapshot, so later changes to the
 * members' records do not change it. 404 for an unknown id; 409 for a snapshot stored before grids were kept.
 */
export async function siteSnapshotDataCsv(siteSnapshotId: number): Promise<{ fileName: string; csv: string; matches: boolean }> {
  await db();
  const snapshot = await SiteSnapshot.findByPk(siteSnapshotId, { attributes: ['id', 'siteId', 'settings', 'status', 'grid', 'provenance', 'createdAt'] });
  if (!snapshot) throw new NotFoundError('Site analysis');
  if (!snapshot.grid || !snapshot.provenance) {
    throw new ConflictError('This site analysis was stored before Brinkwatch kept the grid a site analysis saw, so it cannot be handed out. A newer one can.');
  }
  const site = await Site.findByPk(snapshot.siteId, { attributes: ['slug', 'name'] });
  if (!site) throw new NotFoundError('Site');
  const { provenance, grid } = snapshot;
  const columns = provenance.members.map((m) => m.slug);
  const body = canonicalGridCsv(columns, grid.time, grid.values);
  const matches = sha256Hex(body) === provenance.dataSha256;
  const { detrending, ...settings } = snapshot.settings as { detrending?: unknown };
  const fileName = siteAnalysisFileName(site.slug, snapshot.id);
  const head = [
    `# Brinkwatch site analysis ${snapshot.id} of site "${site.slug}" (${site.name}), stored ${snapshot.createdAt.toISOString()}, status ${snapshot.status}`,
    `# settings: ${JSON.stringify(settings)}`,
    `# site: ${JSON.stringify({ detrending: detrending ?? null, intervalMs: provenance.intervalMs })}`,
    `# provenance: ${JSON.stringify(provenance)}`,
    `# reproduce: ${siteReproduceCommand(fileName, columns)}   (engine version ${provenance.engineVersion}; check the data with: grep -v '^#' ${fileName} | sha256sum)`,
    ...(matches ? [] : ['# warning: the stored grid does not hash to dataSha256; it will not reproduce the numbers']),
    `# caution: ${ANALYSIS_CAUTION}`,
  ];
  return { fileName, csv: `${head.join('\n')}\n${body}`, matches };
}
