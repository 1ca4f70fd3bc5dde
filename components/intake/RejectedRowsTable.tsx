import { CELL_TIGHT, DataTable } from '@/components/ui/DataTable';
import type { RejectedRow } from './api';

export function RejectedRowsTable({ rows, total, caption }: { rows: RejectedRow[]; total: number; caption: string }) {
  if (rows.length === 0) return <p className="text-sm text-ink-soft">No rows were rejected.</p>;
  return (
    <DataTable
      caption={caption}
      frame="scroll"
      columns={['Line', 'Column', 'Reason']}
      footer={
        total > rows.length ? (
          <p className="px-3 py-2 text-xs text-ink-soft">
            Showing {rows.length} of {total} rejected rows.
          </p>
        ) : null
      }
    >
      {rows.map((row, i) => (
        <tr key={`${row.line}-${i}`}>
          <td className={`${CELL_TIGHT} font-mono`}>{row.line}</td>
          <td className={CELL_TIGHT}>{row.column ?? '—'}</td>
          <td className={CELL_TIGHT}>{row.reason}</td>
        </tr>
      ))}
    </DataTable>
  );
}
