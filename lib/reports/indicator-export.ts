import 'server-only';
import Papa from 'papaparse';
import { analyseStored, boundedSettings } from '@/lib/analysis/preview';
import type { AnalysisSummary } from '@/lib/engine/analyze';
import { analysisSettingsSchema, type AnalysisSettings, type IndicatorName } from '@/lib/engine/settings';
import { AnalysisSnapshot, WITHOUT_CHARTS, db, type Series } from '@/models';

export interface IndicatorTable {
  series: { slug: string; name: string; unit: string; timeZone: string };
  source: 'snapshot' | 'saved-settings' | 'posted-settings';
  snapshotId: number | null;
  generatedAt: string;
  settings: AnalysisSettings;
  n: number;
  windowPoints: number;
  kendall: Partial<Record<IndicatorName, { tau: number | null; p: number | null }>>;
  surrogateP: Partial<Record<IndicatorName, number | null>>;
  columns: string[];
  rows: (string | number | null)[][];
}

function num(v: number): number | null {
  return Number.isFinite(v) ? v : null;
}

/**
 * The full-resolution indicator table. Without posted settings it reproduces the latest successful snapshot: the
 * engine is deterministic, so re-running its settings on the record up to the snapshot's last instant gives its
 * curves at every point (stored curves may be thinned); the surrogate p-values are the snapshot's own. With no
 * snapshot yet, the series' saved settings are used.
 */
export async function buildIndicatorTable(series: Series, posted?: AnalysisSettings): Promise<IndicatorTable> {
  await db();
  let source: IndicatorTable['source'] = 'posted-settings';
  let settings = posted ? boundedSettings(posted) : null;
  let snapshot: AnalysisSnapshot | null = null;
  if (!settings) {
    snapshot = await AnalysisSnapshot.findOne({ where: { seriesId: series.id, status: 'ok' }, order: [['id', 'DESC']], attributes: WITHOUT_CHARTS });
    source = snapshot ? 'snapshot' : 'saved-settings';
    settings = analysisSettingsSchema.parse(snapshot?.settings ?? series.settings ?? {});
  }
  const storedSummary = snapshot?.summary as AnalysisSummary | undefined;
  const run = snapshot ? { ...settings, surrogates: 0, sensitivity: false } : { ...settings, sensitivity: false };
  const result = await analyseStored(series, run, { to: snapshot?.dataTo != null ? Number(snapshot.dataTo) : undefined });
  const names = settings.indicators.filter((name) => result.indicators[name]);
  const surrogateP: IndicatorTable['surrogateP'] = {};
  for (const name of names) {
    const p = (storedSummary?.significance ?? result.significance)[name]?.p;
    if (p !== undefined) surrogateP[name] = p;
  }
  // Values that come with an indicator (the restoring rate's standard error, the LM test's p) follow it as
  // `<indicator>.<name>` columns.
  const companions = names.flatMap((name) => Object.entries(result.companions[name] ?? {}).map(([key, values]) => ({ column: `${name}.${key}`, values })));
  const rows: IndicatorTable['rows'] = [];
  const { time, value, trend, residual } = result.series;
  for (let i = 0; i < time.length; i++) {
    rows.push([
      new Date(time[i]).toISOString(),
      num(value[i]),
      num(trend[i]),
      num(residual[i]),
      ...names.map((name) => result.indicators[name]![i]),
      ...companions.map((c) => c.values[i] ?? null),
    ]);
  }
  return {
    series: { slug: series.slug, name: series.name, unit: series.unit, timeZone: series.timeZone },
    source,
    snapshotId: snapshot?.id ?? null,
    generatedAt: new Date().toISOString(),
    settings,
    n: result.n,
    windowPoints: result.windowPoints,
    kendall: result.kendall,
    surrogateP,
    columns: ['time_utc', 'value', 'trend', 'residual', ...names, ...companions.map((c) => c.column)],
    rows,
  };
}

/**
 * CSV of the table. The settings and trend statistics travel as leading `#` comment lines (read by e.g.
 * pandas `comment='#'` and R `read.csv(comment.char='#')`), so the file alone says how it was produced.
 */
export function indicatorTableCsv(table: IndicatorTable): string {
  const header = [
    `# Brinkwatch indicator table: ${table.series.name} (${table.series.slug}), unit ${table.series.unit || 'none'}`,
    `# generated ${table.generatedAt} from ${table.source}${table.snapshotId ? ` #${table.snapshotId}` : ''}; times are UTC (ISO 8601)`,
    `# settings ${JSON.stringify(table.settings)}`,
    `# window ${table.windowPoints} points of ${table.n}`,
    ...Object.entries(table.kendall).map(
      ([name, k]) => `# ${name}: kendall tau ${k?.tau ?? 'NA'}, p ${k?.p ?? 'NA'}, surrogate p ${table.surrogateP[name as IndicatorName] ?? 'NA'}`,
    ),
  ];
  return `${header.join('\n')}\n${Papa.unparse({ fields: table.columns, data: table.rows.map((r) => r.map((v) => (v === null ? '' : v))) }, { newline: '\n' })}\n`;
}
