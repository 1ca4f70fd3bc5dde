'use client';

import { CONTROL } from '@/components/ui/Field';

/**
 * A menu of site names with a first choice for "no site in particular" (all sites, the whole network), as the
 * overview's filter, the period report's scope and a report schedule's scope all ask. `''` is that first choice.
 */
export function SiteNameSelect({
  sites,
  value,
  onChange,
  anyLabel,
  testId,
}: {
  sites: readonly string[];
  value: string;
  onChange: (site: string) => void;
  anyLabel: string;
  testId?: string;
}) {
  return (
    <select className={CONTROL} value={value} onChange={(e) => onChange(e.target.value)} data-testid={testId}>
      <option value="">{anyLabel}</option>
      {sites.map((s) => (
        <option key={s} value={s}>
          {s}
        </option>
      ))}
    </select>
  );
}
