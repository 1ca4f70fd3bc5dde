import type { ReactNode } from 'react';
import { Button } from './Button';

/**
 * Previous and next page of a list, with where one is ("Page 2 of 7", and whatever `children` add). The words on
 * the buttons say which way the list runs (newer/older for logs, previous/next for queues).
 */
export function Pager({
  label,
  page,
  pages,
  onPage,
  previous = '← Previous',
  next = 'Next →',
  children,
}: {
  /** the navigation's accessible name */
  label: string;
  page: number;
  pages: number;
  onPage: (page: number) => void;
  previous?: string;
  next?: string;
  children?: ReactNode;
}) {
  return (
    <nav aria-label={label} className="flex items-center gap-2 text-sm">
      <Button disabled={page <= 1} onClick={() => onPage(page - 1)}>
        {previous}
      </Button>
      <span className="num">
        Page {page} of {pages}
        {children}
      </span>
      <Button disabled={page >= pages} onClick={() => onPage(page + 1)}>
        {next}
      </Button>
    </nav>
  );
}

/** How many pages `total` items make at `pageSize` a page (at least one, so an empty list is "page 1 of 1"). */
export function pageCount(total: number, pageSize: number): number {
  return Math.max(1, Math.ceil(total / pageSize));
}
