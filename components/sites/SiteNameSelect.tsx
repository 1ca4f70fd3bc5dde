'use client';

import { CONTROL } from '@/components/ui/Field';

/**
 * A menu of sites with a first choice for "no site in particular" (all sites, the whole network), as the
 * overview's filter, the period report's scope, a report schedule's scope and the alert queue's filter all ask.
 * `''` is that first choice. A site is its name, or a value with its label (the queue filters by slug).
 */
export function SiteNameSelect({
  sites,
  value,
  onChange,
  anyLabel,
  testId,
}: {
  sites: readonly (string | { value: string; label: string })[];
  value: string;
  onChange: (site: string) => void;
  anyLabel: string;
  testId?: string;
}) {
  return (
    <select className={CONTROL} value={value} onChange={(e) => onChange(e.target.value)} data-testid={testId}>
      <option value="">{anyLabel}</option>
      {sites.map((s) => {
        const { value: key, label } = typeof s === 'string' ? { value: s, label: s } : s;
        return (
          <option key={key} value={key}>
            {label}
          </option>
        );
      })}
    </select>
  );
}
