'use client';

import { useMemo } from 'react';
import { CartesianGrid, Legend, Line, LineChart, ReferenceArea, ReferenceLine, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import { formatLocal, formatLocalDate, formatUtc, formatValue } from '@/lib/display/format';
import { calendarTicks } from '@/lib/display/time-ticks';

export interface LineSpec {
  key: string;
  label: string;
  color: string;
  dashed?: boolean;
  width?: number;
}

export interface TimeChartProps {
  rows: Record<string, number | null>[];
  lines: LineSpec[];
  timeZone: string;
  unit?: string;
  height?: number;
  /** the span one rolling window covers, drawn as a band ending at the last point */
  windowBand?: { from: number; to: number } | null;
  /** marks on the record: known transitions, and maintenance breaks (`kind: 'maintenance'`, drawn apart) */
  transitions?: { at: number; note: string; kind?: 'transition' | 'maintenance' }[];
  /**
   * detected abrupt shifts of level, each at the first instant of the new level; drawn where they fall on the
   * chart's span (the latest one opens the analysed stretch), so earlier ones do not stretch the time axis
   */
  shifts?: { time: number }[];
  /** where the analysed stretch starts and why (labelled when `label` is set) */
  stretchStart?: { at: number; label?: string } | null;
  zeroLine?: boolean;
}

/** Reference lines drawn as plain SVG lines that carry a test id, so browser tests find them without wording. */
const taggedLine = (testId: string) => function TaggedLine(props: React.SVGProps<SVGLineElement>) {
  return <line {...props} className="recharts-reference-line-line" data-testid={testId} />;
};
const shiftLine = taggedLine('shift-marker');
const stretchLine = taggedLine('stretch-start');

/**
 * The one time-axis chart of the product: raw series with trend, residuals and each indicator's rolling curve.
 * It draws what lib/analysis/view.ts computed and nothing else.
 */
export function TimeChart({ rows, lines, timeZone, unit = '', height = 220, windowBand, transitions = [], shifts = [], stretchStart = null, zeroLine }: TimeChartProps) {
  const first = rows[0]?.t ?? null;
  const last = rows[rows.length - 1]?.t ?? null;
  const ticks = useMemo(() => (first !== null && last !== null ? calendarTicks(first, last, timeZone) : []), [first, last, timeZone]);
  const labels = useMemo(() => new Map(ticks.map((tick) => [tick.t, tick.label])), [ticks]);
  return (
    <ResponsiveContainer width="100%" height={height}>
      <LineChart data={rows} margin={{ top: 8, right: 12, bottom: 4, left: 4 }}>
        <CartesianGrid stroke="#ebe7dc" strokeDasharray="2 4" />
        <XAxis dataKey="t" type="number" scale="time" domain={['dataMin', 'dataMax']} ticks={ticks.length >= 2 ? ticks.map((tick) => tick.t) : undefined}
          tickFormatter={(t: number) => labels.get(t) ?? formatLocalDate(t, timeZone)}
          tick={{ fontSize: 11, fill: '#3c4a57' }} minTickGap={40} />
        <YAxis tick={{ fontSize: 11, fill: '#3c4a57' }} width={56} domain={['auto', 'auto']} niceTicks="snap125" tickFormatter={(v: number) => formatValue(v)} />
        <Tooltip
          labelFormatter={(t) => `${formatLocal(Number(t), timeZone)} (${formatUtc(Number(t))})`}
          formatter={(value, name) => [formatValue(Number(value), unit), name]}
          contentStyle={{ fontSize: 12, borderColor: '#d9d4c7' }}
        />
        <Legend wrapperStyle={{ fontSize: 12 }} />
        {windowBand ? (
          <ReferenceArea x1={windowBand.from} x2={windowBand.to} fill="#1f6f78" fillOpacity={0.08} stroke="#1f6f78" strokeOpacity={0.4} strokeDasharray="3 3"
            label={{ value: 'one window', position: 'insideTopRight', fontSize: 11, fill: '#164e55' }} ifOverflow="extendDomain" />
        ) : null}
        {zeroLine ? <ReferenceLine y={0} stroke="#6b7785" strokeDasharray="4 2" /> : null}
        {transitions.map((tr) =>
          tr.kind === 'maintenance' ? (
            <ReferenceLine key={`m-${tr.at}`} x={tr.at} stroke="#6b7785" strokeWidth={1.5} strokeDasharray="1 3"
              label={{ value: `⚙ ${tr.note || 'maintenance break'}`, position: 'insideTopLeft', fontSize: 11, fill: '#3c4a57' }} />
          ) : (
            <ReferenceLine key={tr.at} x={tr.at} stroke="#a8322a" strokeWidth={1.5} strokeDasharray="6 3"
              label={{ value: `◆ ${tr.note || 'known transition'}`, position: 'insideTopLeft', fontSize: 11, fill: '#a8322a' }} />
          ),
        )}
        {stretchStart ? (
          <ReferenceLine x={stretchStart.at} stroke="#1f6f78" strokeWidth={2} ifOverflow="extendDomain" shape={stretchLine}
            label={stretchStart.label ? { value: `▸ ${stretchStart.label}`, position: 'insideBottomLeft', fontSize: 11, fill: '#164e55' } : undefined} />
        ) : null}
        {shifts.map((shift) => (
          <ReferenceLine key={`shift-${shift.time}`} x={shift.time} stroke="#7a4f9a" strokeWidth={1.5} strokeDasharray="2 2" shape={shiftLine}
            label={{ value: '⇵ abrupt shift', position: 'insideTopRight', fontSize: 11, fill: '#5d3a78' }} />
        ))}
        {lines.map((line) => (
          <Line key={line.key} dataKey={line.key} name={line.label} stroke={line.color} strokeWidth={line.width ?? 1.5}
            strokeDasharray={line.dashed ? '6 3' : undefined} dot={false} isAnimationActive={false} connectNulls={false} />
        ))}
      </LineChart>
    </ResponsiveContainer>
  );
}
