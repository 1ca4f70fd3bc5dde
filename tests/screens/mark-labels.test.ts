import { describe, expect, it } from 'vitest';
import { labelWidth, placeMarkLabels, type MarkLabel } from '@/lib/display/mark-labels';

const CHAR = 6;

/** Whether two placed labels in the same row overlap (or touch closer than the gap). */
function collide(layout: ReturnType<typeof placeMarkLabels>, gap = 4): boolean {
  const { placed } = layout;
  for (let i = 0; i < placed.length; i++) {
    for (let j = i + 1; j < placed.length; j++) {
      const a = placed[i];
      const b = placed[j];
      if (a.row === b.row && a.from < b.to + gap && b.from < a.to + gap) return true;
    }
  }
  return false;
}

describe('labels of chart marks', () => {
  it('puts a tipping-point label and the one-window label that meet near the right edge in different rows', () => {
    // the case seen on the time charts: a tipping point marked inside the last window, whose label ran into the
    // window band's label at the plot's top right
    const labels: MarkLabel[] = [
      { id: 'window', x: 600, text: 'one window', side: 'before' },
      { id: 'tipping-point', x: 540, text: '◆ marked tipping point' },
    ];
    const layout = placeMarkLabels(labels, { width: 600, charWidth: CHAR });
    expect(layout.overflow).toEqual([]);
    expect(layout.rows).toBe(2);
    expect(collide(layout)).toBe(false);
    // the tipping point's text would run past the right edge, so it ends at its mark instead
    expect(layout.placed.find((p) => p.id === 'tipping-point')!.side).toBe('before');
  });

  it('keeps labels far apart in one row', () => {
    const layout = placeMarkLabels(
      [
        { id: 'a', x: 10, text: 'first' },
        { id: 'b', x: 300, text: 'second' },
      ],
      { width: 600, charWidth: CHAR },
    );
    expect(layout.rows).toBe(1);
    expect(layout.placed.map((p) => p.row)).toEqual([0, 0]);
  });

  it('never overlaps, and lists what does not fit in the rows as overflow', () => {
    // shift, stretch start and maintenance marks crowded together: 6 labels at the same place, 3 rows
    const labels: MarkLabel[] = Array.from({ length: 6 }, (_, i) => ({ id: `m${i}`, x: 100 + i, text: '⇵ abrupt shift' }));
    const layout = placeMarkLabels(labels, { width: 800, charWidth: CHAR, maxRows: 3 });
    expect(layout.placed).toHaveLength(3);
    expect(layout.overflow.map((l) => l.id)).toEqual(['m3', 'm4', 'm5']);
    expect(collide(layout)).toBe(false);
  });

  it('places random marks without a collision and uses no more rows than the most labels that overlap at one pixel', () => {
    // first fit in order of left edge colours an interval graph with as many colours as its largest clique
    // (common practice: the interval-partitioning argument)
    let seed = 7;
    const next = () => (seed = (seed * 16807) % 2147483647) / 2147483647;
    for (let trial = 0; trial < 200; trial++) {
      const labels: MarkLabel[] = Array.from({ length: 1 + Math.floor(next() * 8) }, (_, i) => ({
        id: `l${i}`,
        x: Math.round(next() * 700),
        text: 'x'.repeat(3 + Math.floor(next() * 20)),
      }));
      const layout = placeMarkLabels(labels, { width: 700, charWidth: CHAR, maxRows: 99, gap: 0 });
      expect(collide(layout, 0)).toBe(false);
      let deepest = 0;
      for (const p of layout.placed) deepest = Math.max(deepest, layout.placed.filter((q) => q.from <= p.from && p.from < q.to).length);
      expect(layout.rows).toBe(deepest);
    }
  });

  it('estimates width by characters, counting an arrow or symbol as one', () => {
    expect(labelWidth('⇵ abrupt shift', 6)).toBe(14 * 6);
  });
});
