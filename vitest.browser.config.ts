import { defineConfig } from 'vitest/config';

/**
 * `npm run test:browser`: the web pages in Debian's chromium (/usr/bin/chromium) through playwright-core.
 * The tests skip, saying why, when chromium is missing; screenshots go to test-output/browser/ (ignored by git).
 */
export default defineConfig({
  test: {
    include: ['test/browser/**/*.test.ts'],
    testTimeout: 120_000,
    hookTimeout: 90_000,
    fileParallelism: false,
  },
});
