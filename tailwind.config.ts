import type { Config } from 'tailwindcss';

/**
 * Brinkwatch's own palette: warm paper, deep ink, a tidewater teal for actions, and two plainly different
 * hues for the two alert severities (always paired with a word or symbol, never colour alone).
 */
const config: Config = {
  content: ['./app/**/*.{ts,tsx}', './components/**/*.{ts,tsx}'],
  theme: {
    extend: {
      colors: {
        paper: '#f6f4ef',
        card: '#ffffff',
        ink: { DEFAULT: '#14202b', soft: '#3c4a57', faint: '#6b7785' },
        rule: '#d9d4c7',
        tide: { DEFAULT: '#1f6f78', dark: '#164e55', light: '#d5ebec' },
        calm: { DEFAULT: '#3f7a4f', light: '#dcefdf' },
        watch: { DEFAULT: '#9a6412', light: '#f8ebd2' },
        warning: { DEFAULT: '#a8322a', light: '#f7dcd8' },
      },
      fontFamily: {
        sans: ['var(--font-sans)', 'system-ui', 'sans-serif'],
        mono: ['var(--font-mono)', 'ui-monospace', 'monospace'],
      },
    },
  },
};

export default config;
