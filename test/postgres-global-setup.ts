/**
 * vitest globalSetup: one throw-away PostgreSQL server for the whole run (test/helpers/postgres.ts), its
 * address handed to the test files as `inject('postgres')`; stopped and its folder removed at the end, also
 * when tests fail. Where PostgreSQL 15+ is missing, the files get the reason instead and skip their suites.
 */
import type { TestProject } from 'vitest/node';
import { startPostgres } from './helpers/postgres.ts';

export interface ProvidedPostgres {
  /** Superuser URL on the maintenance database; null when no server could be started. */
  adminUrl: string | null;
  /** Why there is no server (shown by the skipped suites). */
  missing: string | null;
  startMs: number;
}

declare module 'vitest' {
  export interface ProvidedContext {
    postgres: ProvidedPostgres;
  }
}

export default async function setup(project: TestProject): Promise<() => void> {
  const server = await startPostgres();
  if ('missing' in server) {
    project.provide('postgres', { adminUrl: null, missing: server.missing, startMs: 0 });
    return () => {};
  }
  project.provide('postgres', { adminUrl: server.adminUrl, missing: null, startMs: server.startMs });
  return () => server.stop();
}
