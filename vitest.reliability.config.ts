import { defineConfig } from 'vitest/config';

/**
 * `npm run test:reliability`: fuzzing, SIGKILL crash safety, concurrency, backup under load, tampering, and two
 * servers on one PostgreSQL (about 3 min on 2 cores). One throw-away PostgreSQL server for the run, as in vitest.config.ts.
 */
export default defineConfig({
  test: {
    setupFiles: ['test/fast-check-seed.ts'],
    include: ['test/reliability/**/*.test.ts'],
    globalSetup: ['test/build-before-tests.ts', 'test/postgres-global-setup.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
  },
});
