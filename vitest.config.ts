import { defineConfig } from 'vitest/config';

/**
 * `npm test`: every suite but the long reliability runs (`npm run test:reliability`, vitest.reliability.config.ts)
 * and the real-browser tests (`npm run test:browser`, vitest.browser.config.ts).
 */
export default defineConfig({
  test: {
    setupFiles: ['test/fast-check-seed.ts'],
    include: ['test/**/*.test.ts'],
    exclude: ['test/reliability/**', 'test/browser/**', '**/node_modules/**'],
    // One throw-away PostgreSQL server for the run (about 2 s; the PostgreSQL registry's tests inject its address).
    globalSetup: ['test/build-before-tests.ts', 'test/postgres-global-setup.ts'],
    // Test files share their worker process's module cache instead of re-importing the sources for each of the
    // ~80 files (about half the wall time of a run on 2 cores). Safe because no test mocks modules, stubs
    // globals or leaves process.env changed; the one chdir (test/docs) is undone in a finally.
    isolate: false,
    testTimeout: 60_000,
    hookTimeout: 60_000,
  },
});
