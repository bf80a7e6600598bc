import { defineConfig } from 'vitest/config';

/** `npm test`: every suite but the long reliability runs (`npm run test:reliability`, vitest.reliability.config.ts). */
export default defineConfig({
  test: {
    setupFiles: ['test/fast-check-seed.ts'],
    include: ['test/**/*.test.ts'],
    exclude: ['test/reliability/**', '**/node_modules/**'],
    globalSetup: ['test/build-before-tests.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
  },
});
