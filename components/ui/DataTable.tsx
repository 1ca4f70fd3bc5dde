import type { ReactNode } from 'react';

/** A column heading: its words, and classes for it (e.g. hidden on narrow screens); `srOnly` for a silent one. */
export type Column = ReactNode | { label: ReactNode; className?: string; srOnly?: boolean };

/**
 * How a table sits on the page: `card` framed on its own, `plain` inside a panel that frames it already, `scroll`
 * framed with a limited height and a heading row that stays in view.
 */
export type TableFrame = 'card' | 'plain' | 'scroll';

const FRAMES: Record<TableFrame, string> = {
  card: 'overflow-x-auto rounded-lg border border-rule bg-card',
  plain: 'overflow-x-auto',
  scroll: 'max-h-80 overflow-auto rounded border border-rule',
};

/** The padding of a body cell, so rows line up with the headings. */
export const CELL = 'px-3 py-2';
export const CELL_TIGHT = 'px-3 py-1.5';

function isColumnSpec(column: Column): column is { label: ReactNode; className?: string; srOnly?: boolean } {
  return typeof column === 'object' && column !== null && 'label' in column;
}

/**
 * The scaffold every data table shares: frame, caption (read by screen readers; shown when `showCaption`), a
 * heading row and the body rows the caller gives. Loading, empty and error states stay with each widget, which
 * knows what to say; this draws only a table that has rows. `head` replaces the heading cells where they do more
 * than name a column (sorting).
 */
export function DataTable({
  caption,
  showCaption = false,
  columns,
  head,
  children,
  testId,
  className = '',
  frame = 'card',
  footer,
}: {
  caption: string;
  showCaption?: boolean;
  columns?: Column[];
  head?: ReactNode;
  children: ReactNode;
  testId?: string;
  /** classes of the table itself, e.g. a least width */
  className?: string;
  frame?: TableFrame;
  /** below the table, inside the frame */
  footer?: ReactNode;
}) {
  return (
    <div className={FRAMES[frame]}>
      <table className={`w-full text-sm ${className}`} data-testid={testId}>
        <caption className={showCaption ? 'mb-1 text-left font-semibold' : 'sr-only'}>{caption}</caption>
        <thead className={`border-b border-rule bg-paper text-left text-ink-soft${frame === 'scroll' ? ' sticky top-0' : ''}`}>
          <tr>
            {head ??
              columns?.map((column, i) => {
                const spec = isColumnSpec(column) ? column : { label: column };
                return (
                  <th key={i} scope="col" className={`${CELL} font-medium ${spec.className ?? ''}`}>
                    {spec.srOnly ? <span className="sr-only">{spec.label}</span> : spec.label}
                  </th>
                );
              })}
          </tr>
        </thead>
        <tbody className="divide-y divide-rule">{children}</tbody>
      </table>
      {footer}
    </div>
  );
}
