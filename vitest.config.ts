import { defineConfig } from 'vitest/config';
import react from '@vitejs/plugin-react';
import { fileURLToPath } from 'node:url';

const alias = {
  '@': fileURLToPath(new URL('./src', import.meta.url)),
  '@shared': fileURLToPath(new URL('./shared', import.meta.url)),
};

/**
 * Four projects, run by `npm test` (scripts/test.mjs) in this order of cost:
 *  - unit:        pure code (science, ingest, shared, server helpers); no services
 *  - client:      React components in happy-dom
 *  - reference:   checks against published values and reference tools (ecCodes, netCDF tools, SciPy)
 *  - integration: real PostgreSQL, real HTTP through createApp, real SMTP on loopback
 *  - e2e:         a real browser (Debian Chromium through playwright-core) against the built client
 */
export default defineConfig({
  resolve: { alias },
  test: {
    projects: [
      {
        resolve: { alias },
        test: { name: 'unit', environment: 'node', include: ['tests/unit/**/*.test.ts'] },
      },
      {
        plugins: [react()],
        resolve: { alias },
        test: {
          name: 'client',
          environment: 'happy-dom',
          include: ['tests/unit/**/*.test.tsx'],
          setupFiles: ['tests/setup/client.ts'],
        },
      },
      {
        resolve: { alias },
        test: { name: 'reference', environment: 'node', include: ['tests/reference/**/*.test.ts'], testTimeout: 120_000 },
      },
      {
        resolve: { alias },
        test: {
          name: 'integration',
          environment: 'node',
          include: ['tests/integration/**/*.test.ts'],
          testTimeout: 60_000,
          hookTimeout: 60_000,
          fileParallelism: false,
        },
      },
      {
        resolve: { alias },
        test: {
          name: 'e2e',
          environment: 'node',
          include: ['tests/e2e/**/*.test.ts'],
          testTimeout: 120_000,
          hookTimeout: 120_000,
          fileParallelism: false,
        },
      },
    ],
  },
});
