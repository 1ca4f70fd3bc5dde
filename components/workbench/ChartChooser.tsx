'use client';

import { useMutation } from '@tanstack/react-query';
import { api } from '@/components/api';
import { ErrorNote } from '@/components/States';
import { Button } from '@/components/ui/Button';
import { indicatorLabel } from '@/lib/display/analysis-labels';
import type { Preferences, SeriesChart } from '@/lib/schemas/account';

const chartName = (key: SeriesChart) => (key === 'record' ? 'Record and trend' : key === 'residuals' ? 'Residuals' : indicatorLabel(key, 'title'));

/**
 * Which charts the series page shows and in what order: ticked charts first, in the reader's order (moved with the
 * arrows), then the others. Each change is saved to the reader's preferences on the server, so it holds on every
 * series and in every browser they sign in from.
 */
export function ChartChooser({ available, chosen, onChange }: { available: SeriesChart[]; chosen: SeriesChart[]; onChange: (charts: SeriesChart[]) => void }) {
  // One save at a time, in the order made: quick clicks sent side by side could reach the server out of order and
  // leave an older choice stored.
  const save = useMutation({
    scope: { id: 'series-charts' },
    mutationFn: (seriesCharts: SeriesChart[]) => api<Preferences>('/api/account/preferences', { method: 'PUT', body: { seriesCharts } }),
  });
  const apply = (next: SeriesChart[]) => {
    onChange(next);
    save.mutate(next);
  };
  const listed = [...chosen.filter((k) => available.includes(k)), ...available.filter((k) => !chosen.includes(k))];
  const move = (key: SeriesChart, by: -1 | 1) => {
    const order = [...chosen];
    const at = order.indexOf(key);
    const to = at + by;
    if (at < 0 || to < 0 || to >= order.length) return;
    [order[at], order[to]] = [order[to], order[at]];
    apply(order);
  };
  return (
    <div data-testid="chart-chooser">
      <ul className="space-y-1 text-sm">
        {listed.map((key) => {
          const on = chosen.includes(key);
          return (
            <li key={key} className="flex items-center gap-2">
              <label className="flex flex-1 items-center gap-2">
                <input
                  type="checkbox"
                  checked={on}
                  data-testid={`chart-choice-${key}`}
                  onChange={(e) => apply(e.target.checked ? [...chosen, key] : chosen.filter((k) => k !== key))}
                />
                {chartName(key)}
              </label>
              {on ? (
                <>
                  <Button size="sm" variant="quiet" aria-label={`Move ${chartName(key)} up`} onClick={() => move(key, -1)}>
                    ↑
                  </Button>
                  <Button size="sm" variant="quiet" aria-label={`Move ${chartName(key)} down`} onClick={() => move(key, 1)}>
                    ↓
                  </Button>
                </>
              ) : null}
            </li>
          );
        })}
      </ul>
      {save.isError ? <ErrorNote error={save.error}>Your choice applies here but was not saved.</ErrorNote> : null}
      {save.isSuccess ? (
        <p role="status" className="mt-1 text-xs text-ink-soft" data-testid="charts-saved">
          Saved for your account.
        </p>
      ) : null}
    </div>
  );
}
