// Lint: the framework's recommended rules (Core Web Vitals) plus its TypeScript rules, run by `npm run lint`
// inside `npm test` (tests/lint.test.ts). Formatting is Prettier's (`npm run format`), not the linter's.
import nextCoreWebVitals from 'eslint-config-next/core-web-vitals';
import nextTypeScript from 'eslint-config-next/typescript';

const config = [
  ...nextCoreWebVitals,
  ...nextTypeScript,
  {
    ignores: ['.next/**', '.next-builds/**', 'node_modules/**', 'data/**', 'bench/output/**', 'test-results/**', 'dist/**', 'next-env.d.ts'],
  },
  {
    // Only components and pages are React; the test helpers' use… names (useTempDataDir) are vitest fixtures, not hooks.
    files: ['tests/**', 'lib/**', 'bench/**', 'scripts/**', 'jobs/**'],
    rules: { 'react-hooks/rules-of-hooks': 'off' },
  },
  {
    rules: {
      // Names starting with _ are deliberately unused (destructuring a field away).
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none' }],
    },
  },
];

export default config;
