import { defineConfig } from 'vitest/config';

// Three projects so a contributor can run one layer at a time: `npx vitest run --project decoder`.
export default defineConfig({
  test: {
    projects: [
      {
        test: {
          name: 'decoder',
          include: ['tests/decoder/**/*.test.ts'],
          environment: 'node',
          // the CLI tests run the compiled CLI (dist/server/decode.mjs)
          globalSetup: ['tests/decoder/global-setup.ts'],
          testTimeout: 60_000,
        },
      },
      {
        test: {
          name: 'api',
          include: ['tests/api/**/*.test.ts'],
          environment: 'node',
          testTimeout: 30_000,
        },
      },
      {
        test: {
          name: 'browser',
          include: ['tests/browser/**/*.test.ts'],
          environment: 'node',
          globalSetup: ['tests/browser/global-setup.ts'],
          setupFiles: ['tests/browser/support/console-setup.ts'],
          testTimeout: 90_000,
          hookTimeout: 180_000,
          fileParallelism: false,
        },
      },
    ],
  },
});
