import type { ReactNode } from 'react';
import { Empty } from '@/components/States';
import { formatAge } from '@/lib/display/format';
import type { ProvenanceView } from '@/lib/analysis/provenance-record';
import type { SiteProvenanceView } from '@/lib/sites/provenance-record';

/**
 * One analysis's record: what it saw (`facts`, a definition list's terms and details), the hash of exactly that data,
 * the engine version and seed, then the download of the data and the command that recomputes its numbers from it.
 */
function AnalysisRecord({
  title,
  facts,
  p,
}: {
  title: string;
  facts: ReactNode;
  p: { dataSha256: string; engineVersion: string; seed: number; downloadHref: string; fileName: string; command: string };
}) {
  return (
    <div className="space-y-1">
      <div className="font-medium">{title}</div>
      <dl className="grid grid-cols-[auto_minmax(0,1fr)] gap-x-3 gap-y-0.5 text-xs">
        {facts}
        <dt className="text-ink-soft">SHA-256</dt>
        <dd className="break-all font-mono" data-testid="provenance-sha256">
          {p.dataSha256}
        </dd>
        <dt className="text-ink-soft">Engine</dt>
        <dd>
          version {p.engineVersion}, seed {p.seed}
        </dd>
      </dl>
      <p className="text-xs">
        <a className="text-tide hover:underline" href={p.downloadHref} download={p.fileName}>
          Download the analysed data ({p.fileName})
        </a>
        , then reproduce it with:
      </p>
      <code className="block break-all rounded bg-paper px-2 py-1 text-xs" data-testid="provenance-command">
        {p.command}
      </code>
    </div>
  );
}

/**
 * Where an analysis's numbers came from, and how a reviewer gets them again: the hash of exactly the data analysed,
 * the runs that delivered it, the engine version and seed, the download and the command to run on it.
 */
export function ProvenancePanel({ analyses }: { analyses: ProvenanceView[] }) {
  if (analyses.length === 0) return <Empty>These analyses were stored before Brinkwatch recorded which data an analysis saw.</Empty>;
  return (
    <div className="space-y-3 text-sm" data-testid="provenance">
      {analyses.map((p) => (
        <AnalysisRecord
          key={p.snapshotId}
          title={`Analysis #${p.snapshotId}`}
          p={p}
          facts={
            <>
              <dt className="text-ink-soft">Data</dt>
              <dd>
                {p.rows.toLocaleString('en-GB')} rows from{' '}
                {p.ingestRuns.length ? `ingest run${p.ingestRuns.length > 1 ? 's' : ''} ${p.ingestRuns.map((id) => `#${id}`).join(', ')}` : 'no recorded run'}
                {p.rowsWithoutRun ? ` and ${p.rowsWithoutRun.toLocaleString('en-GB')} rows stored before runs were recorded or seeded` : ''}
              </dd>
              <dt className="text-ink-soft">Data version</dt>
              <dd data-testid="provenance-data-version">
                {p.dataVersion === undefined ? 'not recorded (analysed before data versions were counted)' : `${p.dataVersion} of the series’ record`}
              </dd>
              {p.update ? (
                <>
                  <dt className="text-ink-soft">Computed</dt>
                  <dd data-testid="provenance-update">
                    {p.update.mode === 'incremental' ? `updated from analysis #${p.update.basedOnSnapshot}` : 'in full'}: {p.update.reason}
                  </dd>
                </>
              ) : null}
            </>
          }
        />
      ))}
    </div>
  );
}

/**
 * Where a site analysis's numbers came from: the common grid it analysed (kept with it, hashed), the member series
 * and the data version of each when the grid was read, the engine version and seed, the download and the command.
 */
export function SiteProvenancePanel({ analyses }: { analyses: SiteProvenanceView[] }) {
  if (analyses.length === 0) return <Empty>These site analyses were stored before Brinkwatch kept the grid a site analysis saw.</Empty>;
  return (
    <div className="space-y-3 text-sm" data-testid="provenance">
      {analyses.map((p) => (
        <AnalysisRecord
          key={p.siteSnapshotId}
          title={`Site analysis #${p.siteSnapshotId}`}
          p={p}
          facts={
            <>
              <dt className="text-ink-soft">Data</dt>
              <dd>
                {p.instants.toLocaleString('en-GB')} instants of a common grid, one every {formatAge(p.intervalMs)}
              </dd>
              <dt className="text-ink-soft">Series</dt>
              <dd data-testid="provenance-members">{p.members.map((m) => `${m.slug} (data version ${m.dataVersion})`).join(', ')}</dd>
            </>
          }
        />
      ))}
    </div>
  );
}
