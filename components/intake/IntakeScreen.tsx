'use client';

import { DropFolders } from './DropFolders';
import { RunsTable } from './RunsTable';
import { UploadPanel } from './UploadPanel';

export function IntakeScreen({ hasSeries, canUpload }: { hasSeries: boolean; canUpload: boolean }) {
  return (
    <div className="space-y-8">
      {canUpload && <UploadPanel hasSeries={hasSeries} />}
      <RunsTable />
      <DropFolders />
    </div>
  );
}
