'use client';

import { DropFolders } from './DropFolders';
import { RunsTable } from './RunsTable';
import { UploadPanel } from './UploadPanel';

export function IntakeScreen({ series, canUpload }: { series: { slug: string; name: string }[]; canUpload: boolean }) {
  return (
    <div className="space-y-8">
      {canUpload && <UploadPanel series={series} />}
      <RunsTable series={series} />
      <DropFolders />
    </div>
  );
}
