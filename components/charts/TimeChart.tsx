'use client';

import { useMemo, useState } from 'react';
import { CartesianGrid, Legend, Line, LineChart, ReferenceArea, ReferenceDot, ReferenceLine, ResponsiveContainer, Tooltip, XAxis, YAxis } from 'recharts';
import { formatLocal, formatLocalDate, formatUtc, formatValue } from '@/lib/display/format';
import { placeMarkLabels, type MarkLabel, type PlacedMarkLabel } from '@/lib/display/mark-labels';
import { calendarTicks } from '@/lib/display/time-ticks';
import { FLAG_FAIL, FLAG_SUSPECT, type FlaggedPoint } from '@/lib/quality/flags';
import { useChartPalette, type ChartColour } from './theme';

export interface LineSpec {
  key: string;
  label: string;
  /** a colour of the theme (app/globals.css), never a literal */
  color: ChartColour;
  dashed?: boolean;
  width?: number;
  /** an indicator computed at every k-th window only: its evaluations are joined and marked, gaps are not breaks */
  sparse?: boolean;
  /** the edge of an uncertainty band: joined like its indicator, without marks at its points */
  edge?: boolean;
}

export interface TimeChartProps {
  rows: Record<string, number | null>[];
  lines: LineSpec[];
  timeZone: string;
  unit?: string;
  height?: number;
  /** the span one rolling window covers, drawn as a band ending at the last point */
  windowBand?: { from: number; to: number } | null;
  /** marks on the record: marked tipping points, and maintenance breaks (`kind: 'maintenance'`, drawn apart) */
  marks?: { at: number; note: string; kind?: 'tipping-point' | 'maintenance' }[];
  /**
   * detected abrupt shifts of level, each at the first instant of the new level; drawn where they fall on the
   * chart's span (the latest one opens the analysed stretch), so earlier ones do not stretch the time axis
   */
  shifts?: { time: number }[];
  /** where the analysed stretch starts and why (labelled when `label` is set) */
  stretchStart?: { at: number; label?: string } | null;
  zeroLine?: boolean;
  /** the time axis, when several charts are stacked and must share it (small multiples); else it spans what this chart draws */
  xDomain?: [number, number] | null;
  /** points flagged suspect or fail (the record chart): drawn as a triangle or a cross, so the shape tells them apart */
  flagged?: FlaggedPoint[];
}

/** Reference lines drawn as plain SVG lines that carry a test id, so browser tests find them without wording. */
const taggedLine = (testId: string) =>
  function TaggedLine(props: React.SVGProps<SVGLineElement>) {
    return <line {...props} className="recharts-reference-line-line" data-testid={testId} />;
  };
const shiftLine = taggedLine('shift-marker');

/** A flagged point's mark: an open triangle for suspect, a cross for fail (shape first, colour second). */
function flagMark(flag: number, colour: string) {
  return function FlagMark({ cx = 0, cy = 0 }: { cx?: number; cy?: number }) {
    if (flag === FLAG_SUSPECT) {
      return (
        <path
          d={`M${cx},${cy - 5} L${cx + 4.5},${cy + 3.5} L${cx - 4.5},${cy + 3.5} Z`}
          fill="none"
          stroke={colour}
          strokeWidth={1.5}
          data-testid="flag-suspect"
        />
      );
    }
    return (
      <path d={`M${cx - 4},${cy - 4} L${cx + 4},${cy + 4} M${cx + 4},${cy - 4} L${cx - 4},${cy + 4}`} stroke={colour} strokeWidth={2} data-testid="flag-fail" />
    );
  };
}
const stretchLine = taggedLine('stretch-start');

const MARGIN = { top: 8, right: 12, bottom: 4, left: 4 };
const Y_AXIS_WIDTH = 56;
const LABEL_FONT = 11;
/** An average character of the sans face at 11 px, a little generous so estimated labels never undershoot. */
const LABEL_CHAR_WIDTH = 6.4;
const LABEL_ROW_HEIGHT = 14;
const LABEL_GAP = 4;

/**
 * The text of one mark label at its row (rows count down from the plot's top), starting just after its mark or
 * ending just before it, as `placeMarkLabels` decided. Recharts hands it the line's (or band's) box as `viewBox`.
 */
function MarkText({
  placed,
  colour,
  atRightEdge = false,
  viewBox,
}: {
  placed: PlacedMarkLabel;
  colour: string;
  /** a band's label sits at the band's right edge, a line's at the line */
  atRightEdge?: boolean;
  viewBox?: { x?: number; y?: number; width?: number };
}) {
  const x = (viewBox?.x ?? 0) + (atRightEdge ? (viewBox?.width ?? 0) : 0);
  const y = (viewBox?.y ?? 0) + LABEL_FONT + 2 + placed.row * LABEL_ROW_HEIGHT;
  return (
    <text
      x={placed.side === 'after' ? x + LABEL_GAP : x - LABEL_GAP}
      y={y}
      textAnchor={placed.side === 'after' ? 'start' : 'end'}
      fontSize={LABEL_FONT}
      fill={colour}
    >
      {placed.text}
    </text>
  );
}

/**
 * The one time-axis chart of the product: raw series with trend, residuals and each indicator's rolling curve.
 * It draws what lib/analysis/view.ts computed and nothing else. Labels of marks (tipping points, maintenance breaks,
 * shifts, the stretch start, one window) are laid out by `placeMarkLabels` so none overlap; those that do not fit
 * on the plot are listed under it.
 */
export function TimeChart({
  rows,
  lines,
  timeZone,
  unit = '',
  height = 220,
  windowBand,
  marks = [],
  shifts = [],
  stretchStart = null,
  zeroLine,
  xDomain = null,
  flagged = [],
}: TimeChartProps) {
  const colours = useChartPalette();
  const [width, setWidth] = useState(0);
  const first = rows[0]?.t ?? null;
  const last = rows[rows.length - 1]?.t ?? null;
  const tickFrom = xDomain?.[0] ?? first;
  const tickTo = xDomain?.[1] ?? last;
  const ticks = useMemo(() => (tickFrom !== null && tickTo !== null ? calendarTicks(tickFrom, tickTo, timeZone) : []), [tickFrom, tickTo, timeZone]);
  const labels = useMemo(() => new Map(ticks.map((tick) => [tick.t, tick.label])), [ticks]);

  // The axis spans the data, the window band and the stretch start; marks outside it are not drawn.
  const lo = xDomain?.[0] ?? Math.min(...[first, windowBand?.from, stretchStart?.at].filter((v): v is number => v !== null && v !== undefined));
  const hi = xDomain?.[1] ?? Math.max(...[last, windowBand?.to, stretchStart?.at].filter((v): v is number => v !== null && v !== undefined));
  const inside = (t: number) => t >= lo && t <= hi;

  // A handful of marks: laid out afresh on every render, after the container has measured itself.
  const plotWidth = width - MARGIN.left - MARGIN.right - Y_AXIS_WIDTH;
  const px = (t: number) => (hi > lo ? ((t - lo) / (hi - lo)) * plotWidth : 0);
  const markLabels: (MarkLabel & { at: number })[] = [];
  if (windowBand) markLabels.push({ id: 'window', at: windowBand.to, x: px(windowBand.to), text: 'one window', side: 'before' });
  for (const tr of marks) {
    if (!inside(tr.at)) continue;
    markLabels.push(
      tr.kind === 'maintenance'
        ? { id: `m-${tr.at}`, at: tr.at, x: px(tr.at), text: `⚙ ${tr.note || 'maintenance break'}` }
        : { id: `t-${tr.at}`, at: tr.at, x: px(tr.at), text: `◆ ${tr.note || 'marked tipping point'}` },
    );
  }
  if (stretchStart?.label) markLabels.push({ id: 'stretch', at: stretchStart.at, x: px(stretchStart.at), text: `▸ ${stretchStart.label}` });
  for (const shift of shifts)
    if (inside(shift.time)) markLabels.push({ id: `s-${shift.time}`, at: shift.time, x: px(shift.time), text: '⇵ abrupt shift', side: 'before' });
  const layout =
    plotWidth > 0
      ? placeMarkLabels(markLabels, { width: plotWidth, charWidth: LABEL_CHAR_WIDTH, gap: LABEL_GAP, maxRows: height < 200 ? 2 : 3 })
      : { placed: [], overflow: [], rows: 0 };
  const placedById = new Map(layout.placed.map((p) => [p.id, p]));
  const atOf = new Map(markLabels.map((m) => [m.id, m.at]));
  const suspectMark = useMemo(() => flagMark(FLAG_SUSPECT, colours.warning), [colours.warning]);
  const failMark = useMemo(() => flagMark(FLAG_FAIL, colours.shift), [colours.shift]);
  const labelFor = (id: string, colour: string, atRightEdge = false) => {
    const placed = placedById.get(id);
    return placed ? <MarkText placed={placed} colour={colour} atRightEdge={atRightEdge} /> : undefined;
  };

  return (
    <div>
      <ResponsiveContainer width="100%" height={height} onResize={(w) => setWidth(w)}>
        <LineChart data={rows} margin={MARGIN}>
          <CartesianGrid stroke={colours.grid} strokeDasharray="2 4" />
          <XAxis
            dataKey="t"
            type="number"
            scale="time"
            domain={Number.isFinite(lo) && Number.isFinite(hi) ? [lo, hi] : ['dataMin', 'dataMax']}
            ticks={ticks.length >= 2 ? ticks.map((tick) => tick.t) : undefined}
            tickFormatter={(t: number) => labels.get(t) ?? formatLocalDate(t, timeZone)}
            tick={{ fontSize: 11, fill: colours['ink-soft'] }}
            minTickGap={40}
          />
          <YAxis
            tick={{ fontSize: 11, fill: colours['ink-soft'] }}
            width={Y_AXIS_WIDTH}
            domain={['auto', 'auto']}
            niceTicks="snap125"
            tickFormatter={(v: number) => formatValue(v)}
          />
          <Tooltip
            labelFormatter={(t) => `${formatLocal(Number(t), timeZone)} (${formatUtc(Number(t))})`}
            formatter={(value, name) => [formatValue(Number(value), unit), name]}
            contentStyle={{ fontSize: 12, borderColor: colours.rule }}
          />
          <Legend wrapperStyle={{ fontSize: 12 }} />
          {windowBand ? (
            <ReferenceArea
              x1={windowBand.from}
              x2={windowBand.to}
              fill={colours.tide}
              fillOpacity={0.08}
              stroke={colours.tide}
              strokeOpacity={0.4}
              strokeDasharray="3 3"
              label={labelFor('window', colours['tide-dark'], true)}
              ifOverflow="extendDomain"
            />
          ) : null}
          {zeroLine ? <ReferenceLine y={0} stroke={colours['ink-faint']} strokeDasharray="4 2" /> : null}
          {marks.map((tr) =>
            tr.kind === 'maintenance' ? (
              <ReferenceLine
                key={`m-${tr.at}`}
                x={tr.at}
                stroke={colours['ink-faint']}
                strokeWidth={1.5}
                strokeDasharray="1 3"
                label={labelFor(`m-${tr.at}`, colours['ink-soft'])}
              />
            ) : (
              <ReferenceLine
                key={tr.at}
                x={tr.at}
                stroke={colours.warning}
                strokeWidth={1.5}
                strokeDasharray="6 3"
                label={labelFor(`t-${tr.at}`, colours.warning)}
              />
            ),
          )}
          {stretchStart ? (
            <ReferenceLine
              x={stretchStart.at}
              stroke={colours.tide}
              strokeWidth={2}
              ifOverflow="extendDomain"
              shape={stretchLine}
              label={labelFor('stretch', colours['tide-dark'])}
            />
          ) : null}
          {shifts.map((shift) => (
            <ReferenceLine
              key={`shift-${shift.time}`}
              x={shift.time}
              stroke={colours.shift}
              strokeWidth={1.5}
              strokeDasharray="2 2"
              shape={shiftLine}
              label={labelFor(`s-${shift.time}`, colours['shift-dark'])}
            />
          ))}
          {lines.map((line) => (
            <Line
              key={line.key}
              dataKey={line.key}
              name={line.label}
              stroke={colours[line.color]}
              strokeWidth={line.width ?? 1.5}
              strokeDasharray={line.dashed ? '6 3' : undefined}
              dot={line.sparse && !line.edge ? { r: 2 } : false}
              isAnimationActive={false}
              connectNulls={line.sparse ?? false}
            />
          ))}
          {flagged
            .filter((point) => inside(point.t) && (point.flag === FLAG_SUSPECT || point.flag === FLAG_FAIL))
            .map((point) => (
              <ReferenceDot
                key={`f-${point.t}`}
                x={point.t}
                y={point.value}
                ifOverflow="discard"
                shape={point.flag === FLAG_SUSPECT ? suspectMark : failMark}
              />
            ))}
        </LineChart>
      </ResponsiveContainer>
      {layout.overflow.length ? (
        <p className="mt-1 text-xs text-ink-soft" data-testid="mark-labels-more">
          Also marked: {layout.overflow.map((mark) => `${mark.text} (${formatLocalDate(atOf.get(mark.id) ?? 0, timeZone)})`).join(' · ')}
        </p>
      ) : null}
    </div>
  );
}
