import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

export default defineConfig({
  resolve: {
    alias: {
      '@': path.dirname(fileURLToPath(import.meta.url)),
      // `server-only` throws on import unless the bundler resolves the `react-server` condition, which Next does for
      // server code; vitest runs that same server code in plain Node, so the marker is an empty module here.
      'server-only': path.join(path.dirname(fileURLToPath(import.meta.url)), 'node_modules/server-only/empty.js'),
    },
  },
  test: {
    include: ['tests/**/*.test.ts'],
    pool: 'forks',
    maxWorkers: 2,
    testTimeout: 120_000,
    // The first integration file may build the production app (a few minutes on two cores).
    hookTimeout: 900_000,
    reporters: ['default'],
  },
});
