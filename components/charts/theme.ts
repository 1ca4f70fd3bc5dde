'use client';

import { useSyncExternalStore } from 'react';

/**
 * The theme's colours as charts need them. The palette is defined once, as CSS variables in app/globals.css
 * (`@theme`); charts read the resolved values rather than `var(--…)` so that a chart saved as SVG or PNG
 * (components/charts/export.ts), which leaves the page's stylesheet behind, keeps its colours.
 */
const CHART_COLOURS = [
  'ink',
  'ink-soft',
  'ink-faint',
  'rule',
  'paper',
  'card',
  'tide',
  'tide-dark',
  'watch',
  'warning',
  'grid',
  'surrogate',
  'shift',
  'shift-dark',
] as const;
export type ChartColour = (typeof CHART_COLOURS)[number];
export type ChartPalette = Record<ChartColour, string>;

/** Before the page's stylesheet can be read (server render, hydration) the variables themselves stand in. */
const SERVER_PALETTE = Object.fromEntries(CHART_COLOURS.map((name) => [name, `var(--color-${name})`])) as ChartPalette;

let resolved: ChartPalette | null = null;

function readPalette(): ChartPalette {
  if (!resolved) {
    const style = getComputedStyle(document.documentElement);
    resolved = Object.fromEntries(
      CHART_COLOURS.map((name) => [name, style.getPropertyValue(`--color-${name}`).trim() || `var(--color-${name})`]),
    ) as ChartPalette;
  }
  return resolved;
}

// The palette does not change while a page is open, so there is nothing to subscribe to.
const subscribe = () => () => {};

/** The chart palette: CSS variable references on the server, resolved colours once in the browser. */
export function useChartPalette(): ChartPalette {
  return useSyncExternalStore(subscribe, readPalette, () => SERVER_PALETTE);
}

/** "#rrggbb" → [r, g, b]; null for anything else (a variable not resolved yet). */
export function hexChannels(colour: string): [number, number, number] | null {
  const match = /^#([0-9a-f]{2})([0-9a-f]{2})([0-9a-f]{2})$/i.exec(colour.trim());
  return match ? [parseInt(match[1], 16), parseInt(match[2], 16), parseInt(match[3], 16)] : null;
}
