'use client';

import { useState } from 'react';
import { formatTau } from '@/lib/display/format';
import { indicatorLabel } from '@/lib/display/analysis-labels';
import type { AnalysisView } from '@/lib/analysis/view';
import { hexChannels, useChartPalette, type ChartPalette } from './theme';

/**
 * Diverging colour for tau ∈ [−1, 1] from the theme: tide for falling, paper at zero, warning red for rising, mixed
 * in sRGB. Before the palette is resolved (server render) the browser's color-mix stands in.
 */
function tauColour(tau: number | null, colours: ChartPalette): string {
  if (tau === null) return colours.card;
  const t = Math.max(-1, Math.min(1, tau));
  const end = t < 0 ? colours.tide : colours.warning;
  const [middle, to] = [hexChannels(colours.paper), hexChannels(end)];
  if (!middle || !to) return `color-mix(in srgb, ${end} ${Math.round(Math.abs(t) * 100)}%, ${colours.paper})`;
  const f = Math.abs(t);
  return `rgb(${middle.map((c, i) => Math.round(c + (to[i] - c) * f)).join(',')})`;
}

function percent(v: number): string {
  return `${Math.round(v * 100)}%`;
}

/** Tau over window × bandwidth for one indicator; the chosen settings' cell is outlined and marked ◆. */
export function SensitivityHeatmap({ grid, indicators }: { grid: NonNullable<AnalysisView['sensitivity']>; indicators: string[] }) {
  const colours = useChartPalette();
  const available = indicators.filter((name) => grid.indicators[name as keyof typeof grid.indicators]);
  const [indicator, setIndicator] = useState(available[0] ?? '');
  const cells = grid.indicators[indicator as keyof typeof grid.indicators];
  if (!cells) return <p className="text-sm text-ink-soft">No sensitivity grid for these indicators.</p>;
  const rows = grid.bandwidths ?? [null];
  return (
    <div>
      <label className="mb-2 flex items-center gap-2 text-sm">
        Indicator
        <select className="rounded border border-rule bg-card px-2 py-1 text-sm" value={indicator} onChange={(e) => setIndicator(e.target.value)}>
          {available.map((name) => (
            <option key={name} value={name}>
              {indicatorLabel(name, 'title')}
            </option>
          ))}
        </select>
        {cells.positiveShare !== null ? <span className="text-ink-soft">{percent(cells.positiveShare)} of cells show a rising trend (tau &gt; 0)</span> : null}
      </label>
      <div className="overflow-x-auto">
        <svg
          role="img"
          aria-label={`Kendall tau of ${indicatorLabel(indicator)} for each rolling window and bandwidth`}
          viewBox={`0 0 ${60 + grid.windows.length * 34} ${30 + rows.length * 26}`}
          className="w-full min-w-[420px] max-w-3xl"
        >
          {grid.windows.map((w, j) => (
            <text key={w} x={60 + j * 34 + 17} y={rows.length * 26 + 16} fontSize="10" textAnchor="middle" fill={colours['ink-soft']}>
              {percent(w)}
            </text>
          ))}
          <text x={60 + (grid.windows.length * 34) / 2} y={rows.length * 26 + 28} fontSize="10" textAnchor="middle" fill={colours['ink-soft']}>
            rolling window (share of the record)
          </text>
          {rows.map((bw, i) => (
            <g key={String(bw)}>
              <text x={54} y={i * 26 + 17} fontSize="10" textAnchor="end" fill={colours['ink-soft']}>
                {bw === null ? 'fixed' : `bw ${percent(bw)}`}
              </text>
              {grid.windows.map((w, j) => {
                const tau = cells.tau[i]?.[j] ?? null;
                const chosen = grid.chosen.window === w && grid.chosen.bandwidth === bw;
                const label = `window ${percent(w)}${bw === null ? '' : `, bandwidth ${percent(bw)}`}: tau ${formatTau(tau)}${chosen ? ' (current settings)' : ''}`;
                return (
                  <g key={w} tabIndex={0} aria-label={label} className="outline-none focus-visible:[&>rect]:stroke-ink">
                    <title>{label}</title>
                    <rect
                      x={60 + j * 34}
                      y={i * 26}
                      width={32}
                      height={24}
                      fill={tauColour(tau, colours)}
                      stroke={chosen ? colours.ink : colours.rule}
                      strokeWidth={chosen ? 2.5 : 0.5}
                    />
                    {chosen ? (
                      <text x={60 + j * 34 + 16} y={i * 26 + 16} fontSize="11" textAnchor="middle" fill={Math.abs(tau ?? 0) > 0.5 ? colours.card : colours.ink}>
                        ◆
                      </text>
                    ) : null}
                  </g>
                );
              })}
            </g>
          ))}
        </svg>
      </div>
      <div className="mt-2 flex items-center gap-2 text-xs text-ink-soft" aria-hidden="true">
        <span>tau −1 (falling)</span>
        <span
          className="h-3 w-40 rounded"
          style={{ background: `linear-gradient(to right, ${tauColour(-1, colours)}, ${tauColour(0, colours)}, ${tauColour(1, colours)})` }}
        />
        <span>+1 (rising)</span>
        <span className="ml-3">◆ current settings</span>
      </div>
      <details className="mt-2 text-sm">
        <summary className="cursor-pointer text-tide">Show the grid as a table</summary>
        <div className="overflow-x-auto">
          <table className="num mt-2 text-xs">
            <caption className="sr-only">Kendall tau of {indicatorLabel(indicator)} by bandwidth (rows) and window (columns)</caption>
            <thead>
              <tr>
                <th scope="col" className="px-1 text-left">
                  bandwidth \ window
                </th>
                {grid.windows.map((w) => (
                  <th key={w} scope="col" className="px-1">
                    {percent(w)}
                  </th>
                ))}
              </tr>
            </thead>
            <tbody>
              {rows.map((bw, i) => (
                <tr key={String(bw)}>
                  <th scope="row" className="px-1 text-left">
                    {bw === null ? 'fixed' : percent(bw)}
                  </th>
                  {grid.windows.map((w, j) => (
                    <td key={w} className={`px-1 text-right ${grid.chosen.window === w && grid.chosen.bandwidth === bw ? 'font-bold underline' : ''}`}>
                      {formatTau(cells.tau[i]?.[j] ?? null)}
                    </td>
                  ))}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      </details>
    </div>
  );
}
