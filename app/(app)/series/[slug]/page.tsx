import Link from 'next/link';
import { BacktestPanel } from '@/components/backtest/BacktestPanel';
import { SeriesRules } from '@/components/alerts/SeriesRules';
import { ruleStatuses } from '@/lib/alerts/rules';
import { Caution } from '@/components/Caution';
import { LocalTime } from '@/components/LocalTime';
import { ErrorNote } from '@/components/States';
import { QualityPanel } from '@/components/workbench/QualityPanel';
import { Workbench } from '@/components/workbench/Workbench';
import { requireRole } from '@/lib/auth/guard';
import { fetchWorkbench } from '@/lib/series/workbench';
import { roleAtLeast } from '@/lib/auth/roles';
import { foundOr404 } from '@/lib/http/page';

export const metadata = { title: 'Series' };

export default async function SeriesPage({ params }: { params: Promise<{ slug: string }> }) {
  const actor = await requireRole('viewer');
  const { slug } = await params;
  const bench = await foundOr404(() => fetchWorkbench(slug));
  const { series } = bench;
  return (
    <section className="space-y-4">
      <nav aria-label="Breadcrumb" className="text-sm text-ink-soft">
        <Link href="/" className="text-tide hover:underline">Overview</Link> / {series.name}
      </nav>
      <header className="flex flex-wrap items-baseline gap-x-4 gap-y-1">
        <h1 className="text-xl font-semibold">{series.name}</h1>
        <span className="text-sm text-ink-soft">{series.site || 'No site'} · {series.unit || 'no unit'} · times in {series.timeZone}</span>
        {bench.snapshot ? (
          <span className="text-sm text-ink-soft">analysed <LocalTime t={bench.snapshot.createdAt} timeZone={series.timeZone} /></span>
        ) : null}
        {roleAtLeast(actor.role, 'lead') ? <Link href={`/series/${series.slug}/settings`} className="ml-auto text-sm text-tide hover:underline" data-testid="series-settings-link">Settings</Link> : null}
      </header>
      {series.description ? <p className="max-w-3xl text-sm text-ink-soft">{series.description}</p> : null}
      <Caution />
      {bench.snapshot?.status === 'error' ? (
        <ErrorNote>The latest analysis run failed: {bench.snapshot.error}. The charts show the last successful one.</ErrorNote>
      ) : null}
      <Workbench
        series={{ slug: series.slug, name: series.name, unit: series.unit, timeZone: series.timeZone }}
        savedSettings={bench.savedSettings}
        initialView={bench.view}
        canTune={roleAtLeast(actor.role, 'analyst')}
        canSave={roleAtLeast(actor.role, 'lead')}
        transitions={bench.transitions}
        history={bench.history}
        quality={<QualityPanel quality={bench.view?.quality ?? null} stretch={bench.view?.stretch ?? null} shifts={bench.view?.shifts ?? []} runs={bench.runs} rejectedRows={bench.rejectedRows} extent={bench.extent} timeZone={series.timeZone} />}
      />
      <SeriesRules statuses={await ruleStatuses(series.id)} timeZone={series.timeZone} />
      <BacktestPanel slug={series.slug} timeZone={series.timeZone} canRun={roleAtLeast(actor.role, 'lead')} />
    </section>
  );
}
