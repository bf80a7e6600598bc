/** POST /api/v1/locks/verify: a design's lockfile (the body) checked against the registry, as `nkledger lock verify` does. */
import type { Hono } from 'hono';
import { z } from 'zod';
import { lockVerify, parseLockfile } from '../../service/lock.ts';
import type { ApiEnv } from '../auth.ts';
import { parseInput, readJson, readQuery } from '../validate.ts';
import type { RouteContext } from '../context.ts';

const verifyQuery = z.strictObject({ strict: z.enum(['true', 'false']).optional() });

export function registerLockRoutes(app: Hono<ApiEnv>, ctx: RouteContext): void {
  app.post('/api/v1/locks/verify', ctx.requireRole('reader'), async (c) => {
    const { strict } = parseInput(verifyQuery, readQuery(c.req.url), 'query', 400);
    const lock = parseLockfile(await readJson(c.req), '<request body>');
    c.header('cache-control', 'no-store');
    // 200 whatever the verdict: the request succeeded; `ok` and each entry's `outcome` carry the answer.
    return c.json(lockVerify(ctx.registry, lock, { strict: strict === 'true' }));
  });
}
