/** POST /api/v1/locks/verify: a design's lockfile (the body) checked against the registry, as `nkledger lock verify` does. */
import type { Hono } from 'hono';
import { z } from 'zod';
import { LOCKFILE_SCHEMA, lockAdd, lockOutdated, lockVerify, parseLockfile, type LockVerifyReport } from '../../service/lock.ts';
import { VERSION_STATUSES } from '../../registry/schema.ts';
import type { ApiEnv } from '../auth.ts';
import { parseInput, readJson, readQuery } from '../validate.ts';
import type { RouteContext } from '../context.ts';
import { AUTH_ERRORS, json, problem, type Operation } from '../operations.ts';

const verifyQuery = z.strictObject({
  strict: z.enum(['true', 'false']).optional().describe('true: retired, draft and withdrawn pins fail instead of warning'),
});

/** The lockfile a client posts (also inside a stack request). */
export const LOCKFILE = LOCKFILE_SCHEMA.meta({ id: 'Lockfile', description: 'an nkledger lockfile (docs/registry.md)' });

const head = z.object({ hash: z.string(), sequence: z.number().int() }).nullable();
const LOCK_VERIFICATION = z
  .object({
    ok: z.boolean(),
    strict: z.boolean(),
    entries: z.array(
      z.object({
        ref: z.string(),
        slug: z.string(),
        version: z.number().int(),
        locked_sha256: z.string(),
        registry_sha256: z.string().nullable().describe("the hash recomputed from the version's content now"),
        status: z.enum(VERSION_STATUSES).nullable(),
        outcome: z.enum(['ok', 'mismatch', 'missing', 'retired', 'draft', 'withdrawn']),
        failed: z.boolean(),
        message: z.string(),
      }),
    ),
    history: z
      .object({
        outcome: z.enum(['ok', 'rewritten', 'broken', 'not-recorded']),
        locked_head: head,
        registry_head: head,
        failed: z.boolean(),
        message: z.string(),
      })
      .describe("whether the registry's audit chain still contains the lockfile's registry_head (docs/registry.md)"),
    failures: z.number().int().min(0),
    warnings: z.number().int().min(0),
  })
  .meta({ id: 'LockVerification' }) satisfies z.ZodType<LockVerifyReport>;

const lockAddQuery = z.strictObject({ ref: z.string().min(1).max(200).describe('the version to pin: slug@N, slug@sha256:PREFIX or a bare slug') });
const LOCK_ENTRY = z.object({ version: z.number().int(), sha256: z.string(), added_at: z.string().meta({ format: 'date-time' }) });
const LOCK_ADDED = z
  .object({
    lock: LOCKFILE,
    ref: z.string(),
    entry: LOCK_ENTRY,
    replaced: LOCK_ENTRY.nullable().describe('the entry of another version of the same material it replaced'),
    notices: z.array(z.string()),
    warnings: z.array(z.string()),
  })
  .meta({ id: 'LockAdded' });
const OUTDATED = z
  .object({
    outdated: z.array(
      z.object({
        ref: z.string(),
        slug: z.string(),
        locked_version: z.number().int(),
        newer_approved: z.array(z.number().int()),
        latest_approved: z.number().int().nullable(),
      }),
    ),
  })
  .meta({ id: 'LockOutdated' });
const LOCK_BODY_ERRORS = {
  400: problem('not a lockfile, a body that is not JSON, or a bad query parameter'),
  413: problem('the body exceeds the max_body_bytes setting'),
  415: problem('the body is not application/json'),
  ...AUTH_ERRORS,
};

export const LOCK_OPERATIONS: Operation[] = [
  {
    method: 'post',
    path: '/api/v1/locks/add',
    summary: 'Pin a version in a posted lockfile and record the chain head (`nkledger lock add`); nothing is stored',
    role: 'reader',
    params: { query: lockAddQuery },
    body: { required: true, content: { 'application/json': LOCKFILE } },
    responses: {
      200: json('the lockfile with the pin, for the client to write', LOCK_ADDED),
      ...LOCK_BODY_ERRORS,
      404: problem('unknown material or version'),
      409: problem('the version was withdrawn: a design must not pin it'),
    },
  },
  {
    method: 'post',
    path: '/api/v1/locks/outdated',
    summary: 'Locked materials with newer approved versions (`nkledger lock outdated`)',
    role: 'reader',
    body: { required: true, content: { 'application/json': LOCKFILE } },
    responses: { 200: json('the outdated entries', OUTDATED), ...LOCK_BODY_ERRORS },
  },
  {
    method: 'post',
    path: '/api/v1/locks/verify',
    summary: 'Verify a design lockfile against the registry',
    description:
      'Answers 200 with `ok` false when an entry is missing or its hash differs; retired, draft and withdrawn pins are warnings, failures with strict=true.',
    role: 'reader',
    params: { query: verifyQuery },
    body: { required: true, content: { 'application/json': LOCKFILE } },
    responses: {
      200: json("per-pin verdicts (each pin's hash recomputed from the content) and `history`", LOCK_VERIFICATION),
      400: problem('not a lockfile, a body that is not JSON, or a bad query parameter'),
      413: problem('the body exceeds the max_body_bytes setting'),
      415: problem('the body is not application/json'),
      ...AUTH_ERRORS,
    },
  },
];

export function registerLockRoutes(app: Hono<ApiEnv>, ctx: RouteContext): void {
  app.post('/api/v1/locks/verify', ctx.requireRole('reader'), async (c) => {
    const { strict } = parseInput(verifyQuery, readQuery(c.req.url), 'query', 400);
    const lock = parseLockfile(await readJson(c.req), '<request body>');
    c.header('cache-control', 'no-store');
    // 200 whatever the verdict: the request succeeded; `ok` and each entry's `outcome` carry the answer.
    return c.json(await lockVerify(ctx.registry, lock, { strict: strict === 'true' }));
  });

  // `nkledger lock add` in server mode: the posted lockfile with REF pinned and the chain head recorded;
  // the client writes the file (nothing is stored on the server).
  app.post('/api/v1/locks/add', ctx.requireRole('reader'), async (c) => {
    const { ref } = parseInput(z.strictObject({ ref: z.string().min(1).max(200) }), readQuery(c.req.url), 'query', 400);
    const lock = parseLockfile(await readJson(c.req), '<request body>');
    c.header('cache-control', 'no-store');
    return c.json(await lockAdd(ctx.registry, lock, ref));
  });

  app.post('/api/v1/locks/outdated', ctx.requireRole('reader'), async (c) => {
    parseInput(z.strictObject({}), readQuery(c.req.url), 'query', 400);
    const lock = parseLockfile(await readJson(c.req), '<request body>');
    c.header('cache-control', 'no-store');
    return c.json({ outdated: await lockOutdated(ctx.registry, lock) });
  });
}
