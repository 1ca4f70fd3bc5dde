'use client';

import { Line, LineChart, YAxis } from 'recharts';

/** A tiny line of one indicator's rolling curve; the numbers beside it carry the meaning, this only shows shape. */
export function Sparkline({ values, label }: { values: (number | null)[]; label: string }) {
  const data = values.map((v, i) => ({ i, v }));
  return (
    <div role="img" aria-label={label} title={label}>
      <LineChart width={96} height={28} data={data} margin={{ top: 2, right: 2, bottom: 2, left: 2 }}>
        <YAxis hide domain={['auto', 'auto']} />
        <Line type="monotone" dataKey="v" stroke="#1f6f78" strokeWidth={1.5} dot={false} isAnimationActive={false} connectNulls={false} />
      </LineChart>
    </div>
  );
}
