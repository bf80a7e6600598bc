import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { defineConfig } from 'vitest/config';
import { POSTGRES_ONLY } from './vitest.config.ts';

/** The test files of `npm test` whose suites run on each backend of test/registry/helpers.ts's BACKENDS. */
function onEachBackend(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const path = join(dir, e.name);
    if (e.isDirectory()) return e.name === 'reliability' || e.name === 'browser' ? [] : onEachBackend(path);
    return e.name.endsWith('.test.ts') && /\bBACKENDS\b/.test(readFileSync(path, 'utf8')) ? [path] : [];
  });
}

/**
 * `npm run test:postgres`: the registry on PostgreSQL, on one throw-away server for the run
 * (test/postgres-global-setup.ts): the PostgreSQL-only files, and the suites that `npm test` runs on SQLite
 * (those that use BACKENDS: the registry suites, the API access matrix) again on PostgreSQL. Where PostgreSQL 15+
 * is missing, the PostgreSQL suites say so and skip.
 */
export default defineConfig({
  test: {
    setupFiles: ['test/fast-check-seed.ts'],
    include: [...POSTGRES_ONLY, ...onEachBackend('test')],
    globalSetup: ['test/build-before-tests.ts', 'test/postgres-global-setup.ts'],
    provide: { registryBackends: ['postgres'] },
    isolate: false,
    testTimeout: 60_000,
    hookTimeout: 60_000,
  },
});
