import { defineConfig } from 'vitest/config';

// Mutation testing (`npm run mutate`, stryker.config.mjs) runs decoder tests only: no api or
// browser project, so no server or browser is started for each mutant.
export default defineConfig({
  test: {
    include: ['tests/decoder/**/*.test.ts'],
    environment: 'node',
    isolate: true,
    testTimeout: 60_000,
  },
});
