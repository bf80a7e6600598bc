/**
 * Admin routes: tokens, server settings, the registry check and backups (role admin), and who a token is. The
 * same service functions as `nkledger token|settings|verify|backup`.
 */
import { createReadStream, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import type { Hono } from 'hono';
import { z } from 'zod';
import { createToken, listTokens, revokeToken, type CreatedToken, type TokenInfo } from '../../service/tokens.ts';
import { resetSetting, SETTING_KEYS, SETTINGS, writeSetting, writeSettingText } from '../../service/settings.ts';
import { backup, verifyRegistry } from '../../service/registry-admin.ts';
import { TOKEN_ROLES } from '../../registry/schema-auth.ts';
import { actorOf, type ApiEnv } from '../auth.ts';
import { HttpProblem } from '../problem.ts';
import { parseInput, readJson } from '../validate.ts';
import type { RouteContext } from '../context.ts';
import { AUTH_ERRORS, json, problem, WRITE_ERRORS, type Operation } from '../operations.ts';

const tokenRequest = z.strictObject({
  user: z.string().min(1).max(64),
  role: z.enum(TOKEN_ROLES),
  expires: z.string().max(20).optional().describe('lifetime: days or hours (90d, 12h, at most 3650d) or never; default the token_lifetime setting'),
});
/** A typed value (`{"value": true}`), or the text a person types on the command line (`{"text": "on"}`). */
const settingRequest = z.union([
  z.strictObject({ value: z.unknown().describe("the setting's new value, as GET /settings shows it") }),
  z.strictObject({
    text: z.string().max(5000).describe('the value as typed on a command line (`on`, `a,b`, `1048576`), parsed as `nkledger settings set` does'),
  }),
]);

const TOKEN = z
  .object({
    id: z.string(),
    user: z.string(),
    role: z.enum(TOKEN_ROLES),
    created_at: z.string().meta({ format: 'date-time' }),
    created_by: z.string(),
    revoked_at: z.string().nullable(),
    revoked_by: z.string().nullable(),
    expires_at: z.string().meta({ format: 'date-time' }).nullable().describe('null: never expires'),
    expired: z.boolean(),
    last_used_at: z.string().meta({ format: 'date-time' }).nullable().describe('recorded at most once an hour per token'),
  })
  .meta({ id: 'Token' }) satisfies z.ZodType<TokenInfo>;
const CREATED_TOKEN = TOKEN.extend({ token: z.string().regex(/^nkl_/).describe('the secret, shown only here') }) satisfies z.ZodType<CreatedToken>;
/** Every setting with its own schema (src/service/settings.ts), as GET /settings answers them. */
const SETTINGS_ANSWER = z
  .object({
    settings: z.strictObject(Object.fromEntries(SETTING_KEYS.map((key) => [key, SETTINGS[key].schema.describe(SETTINGS[key].meaning)]))),
  })
  .meta({ id: 'Settings' });
const settingKey = z.object({ key: z.enum(SETTING_KEYS) });

const VERIFY_REPORT = z
  .object({
    ok: z.boolean(),
    backend: z.enum(['sqlite', 'postgres']).describe('which database holds the registry: the checks differ'),
    not_applicable: z
      .array(z.object({ check: z.string(), reason: z.string() }))
      .describe('checks of the other backend that do not apply to this one, and why (empty on SQLite)'),
    checked_versions: z.number().int(),
    mismatches: z.array(z.object({ ref: z.string(), stored_sha256: z.string(), computed_sha256: z.string().nullable(), reason: z.string() })),
    missing_versions: z.array(z.string()),
    missing_triggers: z.array(z.string()),
    altered_triggers: z.array(z.string()),
    unexpected_triggers: z.array(z.string()),
    disabled_triggers: z.array(z.string()).describe('triggers present but switched off (PostgreSQL); empty on SQLite'),
    chain: z.object({ head: z.object({ hash: z.string(), sequence: z.number().int() }).nullable(), problems: z.array(z.string()) }),
    state_mismatches: z.array(z.object({ ref: z.string(), problem: z.string() })),
    integrity: z.array(z.string()),
  })
  .meta({ id: 'VerifyReport' });

export const ADMIN_OPERATIONS: Operation[] = [
  {
    method: 'get',
    path: '/api/v1/whoami',
    summary: 'Who the token sent stands for (`nkledger login` checks a token with it)',
    responses: {
      200: json('the token’s user and role', z.object({ user: z.string(), role: z.enum(TOKEN_ROLES), token_id: z.string() })),
      401: problem('no token, a malformed Authorization header, or an unknown or revoked token'),
    },
  },
  {
    method: 'get',
    path: '/api/v1/verify',
    summary: "Check the server's registry file as `nkledger verify` does (200 whatever the verdict: see `ok`)",
    role: 'admin',
    responses: { 200: json('the report', VERIFY_REPORT), ...AUTH_ERRORS },
  },
  {
    method: 'get',
    path: '/api/v1/backup',
    summary: 'A consistent snapshot of the registry (SQLite online backup), streamed (`nkledger backup`)',
    role: 'admin',
    responses: {
      200: {
        description: 'the SQLite database file',
        content: { 'application/vnd.sqlite3': { json: { type: 'string', format: 'binary' } } },
        headers: { 'X-Nkledger-Pages': { description: 'pages copied', schema: { type: 'integer' } } },
      },
      ...AUTH_ERRORS,
    },
  },
  {
    method: 'get',
    path: '/api/v1/tokens',
    summary: 'List tokens (never secrets)',
    role: 'admin',
    responses: { 200: json('tokens', z.object({ tokens: z.array(TOKEN) })), ...AUTH_ERRORS },
  },
  {
    method: 'post',
    path: '/api/v1/tokens',
    summary: 'Create a token; the secret is in this response only',
    role: 'admin',
    body: { required: true, content: { 'application/json': tokenRequest } },
    responses: { 201: json('the token with its secret', CREATED_TOKEN), ...WRITE_ERRORS },
  },
  {
    method: 'post',
    path: '/api/v1/tokens/:id/revoke',
    summary: 'Revoke a token',
    role: 'admin',
    params: { path: z.object({ id: z.string() }) },
    responses: { 200: json('the revoked token', TOKEN), ...WRITE_ERRORS },
  },
  {
    method: 'get',
    path: '/api/v1/settings',
    summary: 'Every setting of the registry and the API (the registry rule allow_self_approval included)',
    role: 'admin',
    responses: { 200: json('settings', SETTINGS_ANSWER), ...AUTH_ERRORS },
  },
  {
    method: 'put',
    path: '/api/v1/settings/:key',
    summary: 'Change a setting',
    role: 'admin',
    params: { path: settingKey },
    body: { required: true, content: { 'application/json': settingRequest } },
    responses: { 200: json('settings after the change', SETTINGS_ANSWER), ...WRITE_ERRORS },
  },
  {
    method: 'delete',
    path: '/api/v1/settings/:key',
    summary: 'Reset a setting to its default',
    role: 'admin',
    params: { path: settingKey },
    responses: { 200: json('settings after the change', SETTINGS_ANSWER), ...WRITE_ERRORS },
  },
];

export function registerAdminRoutes(app: Hono<ApiEnv>, ctx: RouteContext): void {
  const admin = ctx.requireRole('admin');

  app.get('/api/v1/tokens', admin, async (c) => c.json({ tokens: await listTokens(ctx.registry) }));

  app.post('/api/v1/tokens', admin, async (c) => {
    const body = parseInput(tokenRequest, await readJson(c.req), 'body');
    const created = await createToken(ctx.registry, { ...body, createdBy: actorOf(c.get('principal')) });
    c.header('cache-control', 'no-store');
    return c.json(created, 201);
  });

  app.post('/api/v1/tokens/:id/revoke', admin, async (c) => c.json(await revokeToken(ctx.registry, c.req.param('id'), actorOf(c.get('principal')))));

  app.get('/api/v1/settings', admin, async (c) => c.json({ settings: await ctx.settings() }));

  app.put('/api/v1/settings/:key', admin, async (c) => {
    const body = parseInput(settingRequest, await readJson(c.req), 'body');
    const actor = actorOf(c.get('principal'));
    if ('text' in body) await writeSettingText(ctx.registry, c.req.param('key'), body.text, actor);
    else await writeSetting(ctx.registry, c.req.param('key'), body.value, actor);
    return c.json({ settings: await ctx.settings() });
  });

  app.delete('/api/v1/settings/:key', admin, async (c) => {
    await resetSetting(ctx.registry, c.req.param('key'), actorOf(c.get('principal')));
    return c.json({ settings: await ctx.settings() });
  });

  // Who the presented token stands for (`nkledger login` checks a token with it before saving it).
  app.get('/api/v1/whoami', (c) => {
    const principal = c.get('principal');
    if (!principal)
      throw new HttpProblem(401, 'auth-required', 'send a bearer token to learn whose it is', { 'www-authenticate': 'Bearer realm="nkledger"' });
    c.header('cache-control', 'no-store');
    return c.json({ user: principal.user, role: principal.role, token_id: principal.tokenId });
  });

  // `nkledger verify` in server mode: the check runs here, on the server's own file.
  app.get('/api/v1/verify', admin, async (c) => {
    c.header('cache-control', 'no-store');
    return c.json(await verifyRegistry(ctx.registry));
  });

  // `nkledger backup` in server mode: one consistent snapshot (SQLite online backup to a private temporary
  // file), streamed to the client, which links it into place only when complete.
  app.get('/api/v1/backup', admin, async () => {
    const dir = mkdtempSync(join(tmpdir(), 'nkledger-backup-'));
    const cleanup = () => rmSync(dir, { recursive: true, force: true });
    try {
      const { path, pages } = await backup(ctx.registry, join(dir, 'snapshot.db'));
      const stream = createReadStream(path);
      stream.once('close', cleanup);
      return new Response(Readable.toWeb(stream) as ReadableStream, {
        headers: { 'content-type': 'application/vnd.sqlite3', 'cache-control': 'no-store', 'x-nkledger-pages': String(pages) },
      });
    } catch (err) {
      cleanup();
      throw err;
    }
  });
}
