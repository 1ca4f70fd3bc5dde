import { Empty } from '@/components/States';
import { formatAge } from '@/lib/display/format';
import type { ProvenanceView } from '@/lib/analysis/provenance-record';
import type { SiteProvenanceView } from '@/lib/sites/provenance-record';

/** The download of exactly the data an analysis saw, and the command that recomputes its numbers from it. */
function ReproduceSteps({ href, fileName, command }: { href: string; fileName: string; command: string }) {
  return (
    <>
      <p className="text-xs">
        <a className="text-tide hover:underline" href={href} download={fileName}>
          Download the analysed data ({fileName})
        </a>
        , then reproduce it with:
      </p>
      <code className="block break-all rounded bg-paper px-2 py-1 text-xs" data-testid="provenance-command">
        {command}
      </code>
    </>
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
        <div key={p.snapshotId} className="space-y-1">
          <div className="font-medium">Analysis #{p.snapshotId}</div>
          <dl className="grid grid-cols-[auto_minmax(0,1fr)] gap-x-3 gap-y-0.5 text-xs">
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
            <dt className="text-ink-soft">SHA-256</dt>
            <dd className="break-all font-mono" data-testid="provenance-sha256">
              {p.dataSha256}
            </dd>
            {p.update ? (
              <>
                <dt className="text-ink-soft">Computed</dt>
                <dd data-testid="provenance-update">
                  {p.update.mode === 'incremental' ? `updated from analysis #${p.update.basedOnSnapshot}` : 'in full'}: {p.update.reason}
                </dd>
              </>
            ) : null}
            <dt className="text-ink-soft">Engine</dt>
            <dd>
              version {p.engineVersion}, seed {p.seed}
            </dd>
          </dl>
          <ReproduceSteps href={p.downloadHref} fileName={p.fileName} command={p.command} />
        </div>
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
        <div key={p.siteSnapshotId} className="space-y-1">
          <div className="font-medium">Site analysis #{p.siteSnapshotId}</div>
          <dl className="grid grid-cols-[auto_minmax(0,1fr)] gap-x-3 gap-y-0.5 text-xs">
            <dt className="text-ink-soft">Data</dt>
            <dd>
              {p.instants.toLocaleString('en-GB')} instants of a common grid, every {formatAge(p.intervalMs)}
            </dd>
            <dt className="text-ink-soft">Series</dt>
            <dd data-testid="provenance-members">{p.members.map((m) => `${m.slug} (data version ${m.dataVersion})`).join(', ')}</dd>
            <dt className="text-ink-soft">SHA-256</dt>
            <dd className="break-all font-mono" data-testid="provenance-sha256">
              {p.dataSha256}
            </dd>
            <dt className="text-ink-soft">Engine</dt>
            <dd>
              version {p.engineVersion}, seed {p.seed}
            </dd>
          </dl>
          <ReproduceSteps href={p.downloadHref} fileName={p.fileName} command={p.command} />
        </div>
      ))}
    </div>
  );
}
