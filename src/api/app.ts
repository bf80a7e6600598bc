/**
 * The HTTP API as a hono app, built without listening so tests and the benchmark can drive it.
 * Middleware (scoped to /api/*): problem documents for every error, CORS from the allow-list
 * setting, a request-size limit, bearer-token authentication. `Vary: Origin` goes on the answers
 * caches may store (caching.ts, the OpenAPI document) and, from the CORS middleware, on answers to
 * browsers that reach a route (refusals by the front door are problem documents, never cached).
 * Each route module registers its routes with the role it needs; src/api/openapi.ts describes the
 * same routes (a test keeps them equal).
 */
import { Hono, type MiddlewareHandler } from 'hono';
import { every } from 'hono/combine';
import { cors } from 'hono/cors';
import { bodyLimit } from 'hono/body-limit';
import { HTTPException } from 'hono/http-exception';
import { EnvironmentError, InputError } from '../errors.ts';
import { environmentFault } from '../registry/faults.ts';
import { markServerProcess } from '../registry/records.ts';
import { anonymousReadsAllowed, readSettings, type Settings } from '../service/settings.ts';
import type { Registry } from '../registry/open.ts';
import { authenticate, requireRole, type ApiEnv } from './auth.ts';
import { HttpProblem, problemResponse } from './problem.ts';
import type { RouteContext } from './context.ts';
import { registerAdminRoutes } from './routes/admin.ts';
import { registerOpenApiRoute } from './routes/openapi.ts';
import { registerMaterialRoutes } from './routes/materials.ts';
import { registerLockRoutes } from './routes/locks.ts';
import { registerUploadRoutes } from './routes/uploads.ts';
import { registerNkRoute } from './routes/nk.ts';
import { ChangeMemo, RegistryChanges } from './registry-changes.ts';
import { ComputePool } from '../service/compute-pool.ts';
import { registerStackRoute } from './routes/stack.ts';
import { registerEllipsometryRoute } from './routes/ellipsometry.ts';
import { registerRefRoutes } from './routes/refs.ts';

export interface AppOptions {
  registry: Registry;
  /**
   * True when the server listens on a loopback address only; the `anonymous_reads` setting "auto"
   * then allows reads without a token. Defaults to false (the safe side).
   */
  loopback?: boolean;
  /** Settings that override the stored ones for this app (tests, the demo). */
  settings?: Partial<Settings>;
  /** Where internal faults are logged (default: stderr). */
  logFault?: (err: unknown) => void;
  /**
   * The worker threads fits and KK checks run on (src/service/compute-pool.ts). Default: a pool of
   * the default size, made here; threads start only when a task comes (the caller closes it).
   */
  compute?: ComputePool;
  /** Where faults of the environment (disk full, registry read-only, corrupt, replaced) are logged (default: stderr). */
  logEnvironment?: (fault: EnvironmentError) => void;
}

export function createApp(options: AppOptions): Hono<ApiEnv> {
  const { registry } = options;
  // This process is the registry's server: with the setting writes=server-only, its writes are the only ones allowed.
  markServerProcess(registry);
  const changes = new RegistryChanges(registry);
  // Settings are re-read when the registry changes, so `nkledger settings set` in another process
  // (or another server on the same file) takes effect from this server's next turn of the event loop.
  const settingsMemo = new ChangeMemo<Settings>(changes, 1);
  const currentSettings = (): Promise<Settings> =>
    settingsMemo.get('settings', async () => ({ ...(await readSettings(registry)), ...options.settings }));
  const anonymousReads = async () => anonymousReadsAllowed(await currentSettings(), options.loopback === true);

  const ctx: RouteContext = {
    registry,
    changes,
    compute: options.compute ?? new ComputePool(),
    settings: currentSettings,
    requireRole: (role) => requireRole(role, anonymousReads),
  };
  const logFault = options.logFault ?? ((err: unknown) => console.error('nkledger serve: internal error:', err));

  const app = new Hono<ApiEnv>();
  const logEnvironment = options.logEnvironment ?? ((fault: EnvironmentError) => console.error(`nkledger serve: ${fault.describe()}`));
  app.onError((err) => {
    // Faults of the environment (full disk, read-only, corrupt, replaced registry file) are logged as one
    // line saying what happened, and answered 503/507; they are not internal bugs.
    const fault = environmentFault(err, registry.path);
    if (fault) {
      logEnvironment(fault);
      return problemResponse(fault);
    }
    if (!(err instanceof InputError) && !(err instanceof HTTPException)) logFault(err);
    return problemResponse(err);
  });
  app.notFound((c) => problemResponse(new HttpProblem(404, 'route-not-found', `no route for ${c.req.method} ${c.req.path}`)));

  const corsMiddleware = cors({
    origin: async (origin) => ((await currentSettings()).cors_origins.includes(origin) ? origin : null),
    allowMethods: ['GET', 'POST', 'PUT', 'DELETE', 'OPTIONS'],
    allowHeaders: ['Authorization', 'Content-Type', 'If-None-Match', 'Accept'],
    exposeHeaders: ['ETag', 'Location', 'Deprecation'],
    maxAge: 600,
  });
  const bodyLimited: MiddlewareHandler<ApiEnv> = async (c, next) => {
    const maxSize = (await currentSettings()).max_body_bytes;

    return bodyLimit({
      maxSize,
      onError: () => {
        throw new HttpProblem(413, 'body-too-large', `request body exceeds ${maxSize} bytes (setting max_body_bytes)`);
      },
    })(c, next);
  };
  const authenticated = authenticate(registry, changes);
  // The front door of every /api route: CORS first (a preflight is answered, refusals carry CORS
  // headers), then the body limit, then the bearer token — each only where it applies. Only browsers
  // send Origin, and only writes have a body, so a GET from a design tool or script (the n,k path)
  // goes straight to authentication.
  const frontDoor: Record<string, MiddlewareHandler<ApiEnv>> = {
    read: authenticated,
    browserRead: every(corsMiddleware, authenticated),
    write: every(bodyLimited, authenticated),
    browserWrite: every(corsMiddleware, bodyLimited, authenticated),
  };
  app.use('/api/*', (c, next) => {
    const read = c.req.method === 'GET' || c.req.method === 'HEAD';
    const browser = c.req.header('origin') !== undefined;
    const door = browser ? (read ? frontDoor.browserRead : frontDoor.browserWrite) : read ? frontDoor.read : frontDoor.write;
    return door(c, next);
  });

  registerOpenApiRoute(app);
  registerMaterialRoutes(app, ctx);
  registerNkRoute(app, ctx);
  registerUploadRoutes(app, ctx);
  registerLockRoutes(app, ctx);
  registerAdminRoutes(app, ctx);
  registerStackRoute(app, ctx);
  registerEllipsometryRoute(app, ctx);
  registerRefRoutes(app, ctx);
  return app;
}
