'use client';

import { useQuery, useQueryClient } from '@tanstack/react-query';
import { useEffect, useId, useRef, useState } from 'react';
import { api } from '@/components/api';
import type { SeriesChoice } from '@/lib/series/registry';

/** Matches shown per search: enough to pick from, few enough to read. */
const MATCHES = 12;
/** Typing pauses this long before the server is asked, so a word is one request rather than one per letter. */
const TYPING_PAUSE_MS = 200;

function findQuery(find: string) {
  return {
    queryKey: ['series-find', find],
    queryFn: ({ signal }: { signal: AbortSignal }) =>
      api<{ items: SeriesChoice[] }>(`/api/series?${new URLSearchParams({ find, limit: String(MATCHES) })}`, { signal }),
    staleTime: 30_000,
  };
}

/**
 * Choosing one series out of hundreds: a text box that asks GET /api/series?find=… as one types and lists the
 * matches (keyboard: arrows, Enter, Escape), instead of a menu holding every series. As a filter, `value` null
 * means all series and ✕ returns to that; with `required` there is no "all", only a prompt to choose.
 */
export function SeriesPicker({
  label,
  value,
  onChange,
  required = false,
}: {
  label: string;
  value: SeriesChoice | null;
  onChange: (choice: SeriesChoice | null) => void;
  required?: boolean;
}) {
  const emptyLabel = required ? 'Choose a series' : 'All series';
  const id = useId();
  const [text, setText] = useState('');
  const [asked, setAsked] = useState('');
  const [open, setOpen] = useState(false);
  const [active, setActive] = useState(0);
  useEffect(() => {
    const timer = setTimeout(() => setAsked(text.trim()), TYPING_PAUSE_MS);
    return () => clearTimeout(timer);
  }, [text]);
  const queryClient = useQueryClient();
  /** The text as last typed, for an Enter whose matches arrive after more typing. */
  const typed = useRef('');
  const matches = useQuery({
    ...findQuery(asked),
    enabled: open,
    select: (data) => data.items.map(({ slug, name }) => ({ slug, name })),
  });
  const items = matches.data ?? [];
  // The list may still show the matches of what was typed before the pause; Enter must not pick from those.
  const current = asked === text.trim();

  function choose(choice: SeriesChoice | null) {
    onChange(choice);
    setText('');
    typed.current = '';
    setOpen(false);
  }
  /** Enter before the matches of the typed text arrived: ask for them now and take the first, unless typing went on. */
  function chooseFirstMatchOf(find: string) {
    queryClient.fetchQuery(findQuery(find)).then(
      (data) => {
        const first = data.items[0];
        if (first && typed.current.trim() === find) choose({ slug: first.slug, name: first.name });
      },
      // the list says the search failed; Enter then chooses nothing
      () => undefined,
    );
  }
  function onKeyDown(event: React.KeyboardEvent<HTMLInputElement>) {
    if (event.key === 'ArrowDown' || event.key === 'ArrowUp') {
      event.preventDefault();
      setOpen(true);
      if (items.length) setActive((active + (event.key === 'ArrowDown' ? 1 : items.length - 1)) % items.length);
    } else if (event.key === 'Enter' && open) {
      event.preventDefault();
      // The shown matches are those of the typed text only once its answer is in: after the pause and before the
      // answer, the list is empty and Enter fetches the matches itself.
      if (current && matches.data) {
        if (items[active]) choose(items[active]);
      } else chooseFirstMatchOf(text.trim());
    } else if (event.key === 'Escape') {
      setOpen(false);
    }
  }

  const listId = `${id}-matches`;
  return (
    <div className="relative flex flex-col text-xs font-medium text-ink-soft">
      <label htmlFor={`${id}-input`}>{label}</label>
      <div className="mt-1 flex items-center gap-1">
        <input
          id={`${id}-input`}
          type="search"
          role="combobox"
          aria-expanded={open}
          aria-controls={listId}
          aria-autocomplete="list"
          aria-activedescendant={open && items[active] ? `${listId}-${active}` : undefined}
          autoComplete="off"
          value={text}
          placeholder={value ? value.name : emptyLabel}
          onChange={(event) => {
            setText(event.target.value);
            typed.current = event.target.value;
            setActive(0);
            setOpen(true);
          }}
          onFocus={() => setOpen(true)}
          onBlur={() => setOpen(false)}
          onKeyDown={onKeyDown}
          className={`w-48 rounded border border-rule bg-card px-2 py-1.5 text-sm font-normal text-ink ${value ? 'placeholder:text-ink' : ''}`}
        />
        {value && !required ? (
          <button
            type="button"
            onClick={() => choose(null)}
            className="rounded px-1.5 py-1 text-sm text-tide hover:underline"
            aria-label={`Show all series instead of ${value.name}`}
          >
            ✕
          </button>
        ) : null}
      </div>
      {/* always in the page, hidden when closed, so the box's aria-controls names an element that exists */}
      <ul
        id={listId}
        role="listbox"
        aria-label={`${label} matches`}
        hidden={!open}
        className="absolute left-0 top-full z-20 mt-1 max-h-72 w-64 overflow-y-auto rounded border border-rule bg-card py-1 text-sm font-normal text-ink shadow-lg"
      >
        {!open ? null : matches.isError ? (
          <li className="px-3 py-2 text-warning">The series could not be searched. {matches.error.message}</li>
        ) : matches.isPending ? (
          <li className="px-3 py-2 text-ink-soft" role="status">
            Searching…
          </li>
        ) : items.length === 0 ? (
          <li className="px-3 py-2 text-ink-soft">No series match “{asked}”.</li>
        ) : (
          items.map((item, i) => (
            <li
              key={item.slug}
              id={`${listId}-${i}`}
              role="option"
              aria-selected={i === active}
              data-slug={item.slug}
              // mousedown, not click: a click would come after the input's blur has closed the list
              onMouseDown={(event) => {
                event.preventDefault();
                choose(item);
              }}
              onMouseEnter={() => setActive(i)}
              className={`cursor-pointer px-3 py-1.5 ${i === active ? 'bg-tide-light' : ''}`}
            >
              {item.name} <span className="font-mono text-xs text-ink-faint">{item.slug}</span>
            </li>
          ))
        )}
      </ul>
    </div>
  );
}
