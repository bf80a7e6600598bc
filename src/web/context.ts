/** What every web page module receives: the registry, the compute pool, live settings and who is signed in. */
import type { Context } from 'hono';
import type { Registry } from '../registry/open.ts';
import type { ComputePool } from '../service/compute-pool.ts';
import { anonymousReadsAllowed, readSettings, type Settings } from '../service/settings.ts';
import type { WebSession } from '../service/web-sessions.ts';

export interface WebOptions {
  registry: Registry;
  /** Worker threads for the upload preview's parse and fit (nothing heavy runs on the event loop). */
  compute: ComputePool;
  /** True when the server is bound to loopback only (the `anonymous_reads` setting "auto" then allows reading). */
  loopback: boolean;
  /** Settings overriding the stored ones (the demo, tests). */
  settings?: Partial<Settings>;
}

export interface WebEnv {
  Variables: {
    /** The signed-in session, or null for an anonymous reader. */
    session: WebSession | null;
  };
}

export type WebContext = Context<WebEnv>;

export interface PageContext extends WebOptions {
  /** The settings in force: stored values over defaults, then the server's overrides (read per request: one small table). */
  currentSettings(): Promise<Settings>;
  anonymousReads(): Promise<boolean>;
}

export function pageContext(options: WebOptions): PageContext {
  const currentSettings = async (): Promise<Settings> => ({ ...(await readSettings(options.registry)), ...options.settings });
  return { ...options, currentSettings, anonymousReads: async () => anonymousReadsAllowed(await currentSettings(), options.loopback) };
}
