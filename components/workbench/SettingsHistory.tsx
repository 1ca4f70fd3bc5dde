'use client';

import { useQuery } from '@tanstack/react-query';
import { api } from '@/components/api';
import { LocalTime } from '@/components/LocalTime';
import { Empty, ErrorNote, Loading } from '@/components/States';
import type { SettingsHistoryEntry } from '@/lib/analysis/settings-history';
import { describeExtent } from '@/lib/display/analysis-labels';
import { analysisSettingsSchema } from '@/lib/engine/settings';

/** What a saved change left out, the engine used its default for. */
const DEFAULTS = analysisSettingsSchema.parse({});

function describe(settings: Record<string, unknown>): string {
  const extent = (v: unknown) => (typeof v === 'number' || typeof v === 'string' ? describeExtent(v, 'the stretch') : '?');
  const detrend = String(settings.detrend ?? DEFAULTS.detrend);
  const parts = [`window ${extent(settings.window ?? DEFAULTS.window)}`, detrend];
  if (['gaussian', 'local-linear'].includes(detrend)) parts.push(`bandwidth ${extent(settings.bandwidth ?? DEFAULTS.bandwidth)}`);
  if (typeof settings.span === 'number' || typeof settings.span === 'string') parts.push(`span ${describeExtent(settings.span, 'the record')}`);
  if (Array.isArray(settings.indicators)) parts.push(settings.indicators.join(', '));
  if (settings.surrogates) parts.push(`${settings.surrogates} surrogates`);
  if (settings.seasonal && settings.seasonal !== 'none') parts.push(`seasonal: ${settings.seasonal}`);
  return parts.join(' · ');
}

/** Who saved which settings, and when (kept fresh after a save by query invalidation). */
export function SettingsHistory({ slug, initial, timeZone }: { slug: string; initial: SettingsHistoryEntry[]; timeZone: string }) {
  const query = useQuery({
    queryKey: ['settings-history', slug],
    queryFn: () => api<{ items: SettingsHistoryEntry[] }>(`/api/series/${slug}/settings-history`).then((r) => r.items),
    initialData: initial,
  });
  if (query.isPending) return <Loading />;
  if (query.isError) return <ErrorNote error={query.error} />;
  if (query.data.length === 0) return <Empty>No saved settings yet.</Empty>;
  return (
    <ol className="space-y-2 text-sm" data-testid="settings-history">
      {query.data.map((entry, i) => (
        <li key={entry.id} className="border-l-2 border-rule pl-3">
          <div className="flex flex-wrap gap-x-2">
            <LocalTime t={entry.changedAt} timeZone={timeZone} withZone />
            <span className="font-medium">{entry.changedBy?.name ?? 'system'}</span>
            {i === 0 ? <span className="text-xs text-calm">(in use)</span> : null}
          </div>
          <div className="text-xs text-ink-soft">{describe(entry.settings)}</div>
          {entry.reason ? <div className="text-xs">Why: {entry.reason}</div> : null}
        </li>
      ))}
    </ol>
  );
}
