'use client';

import { useRouter } from 'next/navigation';
import { useState, type FormEvent } from 'react';
import { Button } from '@/components/ui/Button';
import { CONTROL, Field } from '@/components/ui/Field';
import { periodBounds, periodContaining, type Period, type PeriodKind } from '@/lib/reports/period-shape';
import { SiteNameSelect } from '@/components/sites/SiteNameSelect';

type Choice = PeriodKind | 'dates';

/** The kind of period a from/to pair is, so the picker opens on what the reader chose last. */
function choiceOf(period: Period): Choice {
  const start = periodBounds(period).start;
  for (const kind of ['month', 'quarter', 'year'] as const) {
    const whole = periodContaining(kind, start);
    if (whole.from === period.from && whole.to === period.to) return kind;
  }
  return 'dates';
}

/** Pick a month, quarter, year or any dates, and a site or the whole network; the page reloads with them in its address. */
export function PeriodPicker({ period, site, sites }: { period: Period; site: string; sites: string[] }) {
  const router = useRouter();
  const [choice, setChoice] = useState<Choice>(choiceOf(period));
  const [anchor, setAnchor] = useState(period.from);
  const [from, setFrom] = useState(period.from);
  const [to, setTo] = useState(period.to);
  const [where, setWhere] = useState(site);

  const submit = (event: FormEvent) => {
    event.preventDefault();
    const chosen = choice === 'dates' ? { from, to } : periodContaining(choice, Date.parse(`${anchor}T00:00:00Z`));
    const query = new URLSearchParams({ from: chosen.from, to: chosen.to, ...(where ? { site: where } : {}) });
    router.push(`/reports?${query}`);
  };

  return (
    <form onSubmit={submit} className="no-print flex flex-wrap items-end gap-3" data-testid="period-picker">
      <Field label="Period" tone="filter">
        <select className={CONTROL} value={choice} onChange={(e) => setChoice(e.target.value as Choice)} data-testid="period-kind">
          <option value="month">Month</option>
          <option value="quarter">Quarter</option>
          <option value="year">Year</option>
          <option value="dates">Dates</option>
        </select>
      </Field>
      {choice === 'dates' ? (
        <>
          <Field label="From" tone="filter">
            <input type="date" className={CONTROL} value={from} onChange={(e) => setFrom(e.target.value)} required />
          </Field>
          <Field label="To" tone="filter">
            <input type="date" className={CONTROL} value={to} onChange={(e) => setTo(e.target.value)} required />
          </Field>
        </>
      ) : (
        <Field label={`A day in the ${choice}`} tone="filter">
          <input type="date" className={CONTROL} value={anchor} onChange={(e) => setAnchor(e.target.value)} required data-testid="period-anchor" />
        </Field>
      )}
      <Field label="Site" tone="filter">
        <SiteNameSelect sites={sites} value={where} onChange={setWhere} anyLabel="Whole network" testId="period-site" />
      </Field>
      <Button type="submit" variant="primary">
        Show report
      </Button>
    </form>
  );
}
