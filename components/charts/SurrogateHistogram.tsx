'use client';

import { Bar, BarChart, CartesianGrid, ReferenceLine, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import { formatTau } from '@/lib/display/format';
import type { HistogramBin } from '@/lib/analysis/view';
import { useChartPalette } from './theme';

/** Counts of surrogate taus per bin, with the observed tau as a labelled line. */
export function SurrogateHistogram({ bins, observed, height = 180 }: { bins: HistogramBin[]; observed: number | null; height?: number }) {
  const colours = useChartPalette();
  const data = bins.map((b) => ({ mid: (b.from + b.to) / 2, count: b.count, range: `${formatTau(b.from)} to ${formatTau(b.to)}` }));
  const lo = bins[0]?.from ?? -1;
  const hi = bins[bins.length - 1]?.to ?? 1;
  return (
    <ResponsiveContainer width="100%" height={height}>
      <BarChart data={data} margin={{ top: 16, right: 12, bottom: 4, left: 0 }} barCategoryGap={1}>
        <CartesianGrid stroke={colours.grid} strokeDasharray="2 4" vertical={false} />
        <XAxis dataKey="mid" type="number" domain={[lo, hi]} tickFormatter={(v: number) => formatTau(v)} tick={{ fontSize: 11, fill: colours['ink-soft'] }} />
        <YAxis allowDecimals={false} tick={{ fontSize: 11, fill: colours['ink-soft'] }} width={36} />
        <Tooltip
          labelFormatter={(_l, payload) => `tau ${payload?.[0]?.payload?.range ?? ''}`}
          formatter={(v) => [v, 'surrogates']}
          contentStyle={{ fontSize: 12 }}
        />
        <Bar dataKey="count" fill={colours.surrogate} isAnimationActive={false} />
        {observed !== null ? (
          <ReferenceLine
            x={observed}
            stroke={colours.warning}
            strokeWidth={2}
            label={{ value: `observed ${formatTau(observed)}`, position: 'top', fontSize: 11, fill: colours.warning }}
          />
        ) : null}
      </BarChart>
    </ResponsiveContainer>
  );
}
