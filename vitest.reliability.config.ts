import { defineConfig } from 'vitest/config';

/** `npm run test:reliability`: fuzzing, SIGKILL crash safety, concurrency, backup under load, tampering (2–3 min). */
export default defineConfig({
  test: {
    setupFiles: ['test/fast-check-seed.ts'],
    include: ['test/reliability/**/*.test.ts'],
    globalSetup: ['test/build-before-tests.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
  },
});
