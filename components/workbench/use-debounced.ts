'use client';

import { useEffect, useState } from 'react';

/** `value` once it has stopped changing for `ms` milliseconds: drafts recomputed on the server wait for a pause in typing. */
export function useDebounced<T>(value: T, ms: number): T {
  const [debounced, setDebounced] = useState(value);
  useEffect(() => {
    const timer = setTimeout(() => setDebounced(value), ms);
    return () => clearTimeout(timer);
  }, [value, ms]);
  return debounced;
}
