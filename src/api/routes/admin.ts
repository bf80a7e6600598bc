/** Admin routes: tokens and server settings (role admin). The same service functions as `nkledger token|settings`. */
import type { Hono } from 'hono';
import { z } from 'zod';
import { createToken, listTokens, revokeToken } from '../../service/tokens.ts';
import { resetSetting, writeSetting } from '../../service/settings.ts';
import { TOKEN_ROLES } from '../../registry/schema-auth.ts';
import { actorOf, type ApiEnv } from '../auth.ts';
import { parseInput, readJson } from '../validate.ts';
import type { RouteContext } from '../context.ts';

const tokenRequest = z.strictObject({ user: z.string().min(1).max(64), role: z.enum(TOKEN_ROLES) });
const settingRequest = z.strictObject({ value: z.unknown() });

export function registerAdminRoutes(app: Hono<ApiEnv>, ctx: RouteContext): void {
  const admin = ctx.requireRole('admin');

  app.get('/api/v1/tokens', admin, (c) => c.json({ tokens: listTokens(ctx.registry) }));

  app.post('/api/v1/tokens', admin, async (c) => {
    const body = parseInput(tokenRequest, await readJson(c.req), 'body');
    const created = createToken(ctx.registry, { ...body, createdBy: actorOf(c.get('principal')) });
    c.header('cache-control', 'no-store');
    return c.json(created, 201);
  });

  app.post('/api/v1/tokens/:id/revoke', admin, (c) => c.json(revokeToken(ctx.registry, c.req.param('id'), actorOf(c.get('principal')))));

  app.get('/api/v1/settings', admin, (c) => c.json({ settings: ctx.settings() }));

  app.put('/api/v1/settings/:key', admin, async (c) => {
    const body = parseInput(settingRequest, await readJson(c.req), 'body');
    writeSetting(ctx.registry, c.req.param('key'), body.value, actorOf(c.get('principal')));
    return c.json({ settings: ctx.settings() });
  });

  app.delete('/api/v1/settings/:key', admin, (c) => {
    resetSetting(ctx.registry, c.req.param('key'), actorOf(c.get('principal')));
    return c.json({ settings: ctx.settings() });
  });
}
