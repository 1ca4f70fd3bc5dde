/**
 * The overview's sparklines, computed on the server so the page draws short path strings rather than chart
 * components. Pure; shared by lib/overview (which computes) and the Sparkline component (which draws).
 */

/** Points in an overview sparkline: enough to show a rising curve, few enough for 500 rows. */
export const SPARK_POINTS = 60;

/** Every SPARK_POINTS-th share of a curve, keeping the last value. O(n). */
export function sparkline(values: (number | null)[], points = SPARK_POINTS): (number | null)[] {
  if (values.length <= points) return values;
  const step = (values.length - 1) / (points - 1);
  return Array.from({ length: points }, (_, i) => values[Math.round(i * step)]);
}

/** Size of the drawn sparkline in CSS pixels, with SPARK_INSET kept free on every side for the stroke. */
export const SPARK_WIDTH = 96;
export const SPARK_HEIGHT = 28;
const SPARK_INSET = 2;

/**
 * The SVG path of a sparkline: point i at x = inset + i·(w − 2·inset)/(n − 1), and value v at
 * y = inset + (max − v)/(max − min)·(h − 2·inset) (SVG's y grows downwards, so the largest value is at the top);
 * a flat curve is drawn mid-height. Missing values break the line (a new `M`), as a gap in the record should.
 * Coordinates are rounded to 0.1 px, below what a screen shows. Computed here once per snapshot, so a page
 * of 500 rows sends and draws 500 short strings rather than 500 chart components. O(n).
 */
export function sparkPath(values: (number | null)[], width = SPARK_WIDTH, height = SPARK_HEIGHT): string {
  let min = Infinity;
  let max = -Infinity;
  for (const v of values) {
    if (v === null || !Number.isFinite(v)) continue;
    if (v < min) min = v;
    if (v > max) max = v;
  }
  if (min > max) return '';
  const xStep = values.length > 1 ? (width - 2 * SPARK_INSET) / (values.length - 1) : 0;
  const yScale = max > min ? (height - 2 * SPARK_INSET) / (max - min) : 0;
  const parts: string[] = [];
  let drawing = false;
  values.forEach((v, i) => {
    if (v === null || !Number.isFinite(v)) {
      drawing = false;
      return;
    }
    const x = SPARK_INSET + i * xStep;
    const y = yScale ? SPARK_INSET + (max - v) * yScale : height / 2;
    parts.push(`${drawing ? 'L' : 'M'}${x.toFixed(1)} ${y.toFixed(1)}`);
    drawing = true;
  });
  return parts.join('');
}
