import type { Config } from 'tailwindcss';

/**
 * Content paths and fonts. The palette lives in app/globals.css (`@theme`), defined once as CSS variables
 * (`--color-*`) that both the utilities (`bg-tide`, `text-ink-soft`) and the charts (components/charts/theme.ts) read.
 */
const config: Config = {
  content: ['./app/**/*.{ts,tsx}', './components/**/*.{ts,tsx}'],
  theme: {
    extend: {
      fontFamily: {
        sans: ['var(--font-sans)', 'system-ui', 'sans-serif'],
        mono: ['var(--font-mono)', 'ui-monospace', 'monospace'],
      },
    },
  },
};

export default config;
