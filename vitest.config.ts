import { defineConfig } from 'vitest/config';
import { fileURLToPath } from 'node:url';

export default defineConfig({
  resolve: {
    tsconfigPaths: true,
    // `server-only` throws outside Next's server build; tests import server modules directly.
    alias: { 'server-only': fileURLToPath(new URL('./tests/support/empty-module.ts', import.meta.url)) },
  },
  test: {
    environment: 'node',
    include: ['tests/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 240_000,
  },
});
