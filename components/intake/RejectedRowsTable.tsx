import type { RejectedRow } from './api';

export function RejectedRowsTable({ rows, total, caption }: { rows: RejectedRow[]; total: number; caption: string }) {
  if (rows.length === 0) return <p className="text-sm text-ink-soft">No rows were rejected.</p>;
  return (
    <div className="max-h-80 overflow-auto rounded border border-rule">
      <table className="w-full text-left text-sm">
        <caption className="sr-only">{caption}</caption>
        <thead className="sticky top-0 bg-paper text-xs uppercase text-ink-soft">
          <tr><th scope="col" className="px-3 py-2">Line</th><th scope="col" className="px-3 py-2">Column</th><th scope="col" className="px-3 py-2">Reason</th></tr>
        </thead>
        <tbody className="divide-y divide-rule">
          {rows.map((row, i) => (
            <tr key={`${row.line}-${i}`}>
              <td className="px-3 py-1.5 font-mono">{row.line}</td>
              <td className="px-3 py-1.5">{row.column ?? '—'}</td>
              <td className="px-3 py-1.5">{row.reason}</td>
            </tr>
          ))}
        </tbody>
      </table>
      {total > rows.length && <p className="px-3 py-2 text-xs text-ink-soft">Showing {rows.length} of {total} rejected rows.</p>}
    </div>
  );
}
