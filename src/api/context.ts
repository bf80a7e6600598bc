/** What every route module receives from the app factory: the registry, live settings and the role guard. */
import type { MiddlewareHandler } from 'hono';
import type { TokenRole } from '../registry/schema-auth.ts';
import type { Settings } from '../service/settings.ts';
import type { Registry } from '../registry/open.ts';
import type { ApiEnv } from './auth.ts';
import type { RegistryChanges } from './registry-changes.ts';
import type { ComputePool } from '../service/compute-pool.ts';

export interface RouteContext {
  registry: Registry;
  /** The worker threads for CPU-heavy work (fits, KK checks): nothing heavy runs on the event loop. */
  compute: ComputePool;
  /** Tells when the registry may have changed, for memos of small answers (registry-changes.ts). */
  changes: RegistryChanges;
  /**
   * The settings in force (stored values over defaults, then the factory's overrides), re-read
   * whenever the registry has changed (a change by this server, the CLI or another server).
   */
  settings(): Promise<Settings>;
  requireRole(role: TokenRole): MiddlewareHandler<ApiEnv>;
}
