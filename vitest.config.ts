import { defineConfig } from 'vitest/config';

/** The test files that exist only for the PostgreSQL registry: `npm run test:postgres` runs them. */
export const POSTGRES_ONLY = ['test/registry/pg-*.test.ts', 'test/registry/copy-pg.test.ts', 'test/cli/registry-cli-pg.test.ts'];

/**
 * `npm test`: every suite on SQLite, but not the long reliability runs (`npm run test:reliability`,
 * vitest.reliability.config.ts), the PostgreSQL registry (`npm run test:postgres`, vitest.postgres.config.ts)
 * or the real-browser tests (`npm run test:browser`, vitest.browser.config.ts). `.ci/run` runs all four.
 */
export default defineConfig({
  test: {
    setupFiles: ['test/fast-check-seed.ts'],
    include: ['test/**/*.test.ts'],
    exclude: ['test/reliability/**', 'test/browser/**', ...POSTGRES_ONLY, '**/node_modules/**'],
    globalSetup: ['test/build-before-tests.ts'],
    // The registry suites that run on both backends run here on SQLite (test/registry/helpers.ts BACKENDS).
    provide: { registryBackends: ['sqlite'] },
    // Test files share their worker process's module cache instead of re-importing the sources for each of the
    // ~80 files (about half the wall time of a run on 2 cores). Safe because no test mocks modules, stubs
    // globals or leaves process.env changed; the one chdir (test/docs) is undone in a finally.
    isolate: false,
    testTimeout: 60_000,
    hookTimeout: 60_000,
  },
});
