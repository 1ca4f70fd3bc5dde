/**
 * Where the labels of a time chart's marks go (marked tipping points, maintenance breaks, detected shifts, the start of
 * the analysed stretch, the span of one window), so that no two overlap. Pure; browser-safe.
 *
 * Each label is a line of text beside a vertical position on the plot. Labels are taken from left to right and
 * each goes into the first row (counted down from the top of the plot) where it clears the labels already there
 * by `gap` pixels — greedy interval partitioning, which for one pass in order of left edge uses as few rows as any
 * placement can (the classic earliest-start-time argument; common practice). A label that would run past the
 * plot's right edge is turned to end at its mark instead. Labels that find no free row among `maxRows` are not
 * drawn on the plot and are returned in `overflow`, for the chart to list beside it.
 */

export interface MarkLabel {
  /** stable key */
  id: string;
  /** the mark's position in pixels from the plot's left edge */
  x: number;
  text: string;
  /** which side of the mark the text runs: 'after' (rightwards, the default) or 'before' (ending at the mark) */
  side?: 'after' | 'before';
}

export interface PlacedMarkLabel extends MarkLabel {
  side: 'after' | 'before';
  /** 0 is the top row */
  row: number;
  /** the pixels the text covers */
  from: number;
  to: number;
}

export interface MarkLabelLayout {
  placed: PlacedMarkLabel[];
  overflow: MarkLabel[];
  /** rows in use (0 when nothing is placed) */
  rows: number;
}

export interface MarkLabelOptions {
  /** the plot's width in pixels */
  width: number;
  /** the average width of one character in pixels at the labels' font size */
  charWidth: number;
  /** space between the mark and its text, and the least space between two labels in a row */
  gap?: number;
  maxRows?: number;
}

/** The pixel width a label's text is taken to cover (an estimate: the text is not measured). */
export function labelWidth(text: string, charWidth: number): number {
  return Array.from(text).length * charWidth;
}

/** Rows for every label so none overlap; see the module comment. Cost O(n log n + n·maxRows). */
export function placeMarkLabels(labels: readonly MarkLabel[], options: MarkLabelOptions): MarkLabelLayout {
  const gap = options.gap ?? 4;
  const maxRows = options.maxRows ?? 3;
  const spans = labels.map((label) => {
    const width = labelWidth(label.text, options.charWidth);
    let side = label.side ?? 'after';
    if (side === 'after' && label.x + gap + width > options.width && label.x - gap - width >= 0) side = 'before';
    if (side === 'before' && label.x - gap - width < 0 && label.x + gap + width <= options.width) side = 'after';
    const from = side === 'after' ? label.x + gap : label.x - gap - width;
    return { label, side, from, to: from + width };
  });
  spans.sort((a, b) => a.from - b.from || a.label.id.localeCompare(b.label.id));
  const rowEnds: number[] = [];
  const placed: PlacedMarkLabel[] = [];
  const overflow: MarkLabel[] = [];
  for (const span of spans) {
    let row = rowEnds.findIndex((end) => span.from >= end + gap);
    if (row === -1 && rowEnds.length < maxRows) row = rowEnds.length;
    if (row === -1) {
      overflow.push(span.label);
      continue;
    }
    rowEnds[row] = span.to;
    placed.push({ ...span.label, side: span.side, row, from: span.from, to: span.to });
  }
  return { placed, overflow, rows: rowEnds.length };
}
