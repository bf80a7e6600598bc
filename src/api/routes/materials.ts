/**
 * Materials and versions: list/search, one material, one version (cached by content hash), and the
 * lifecycle writes. Each handler parses the request, calls the service function the CLI calls, and
 * renders JSON; the registry rules live in src/service, not here.
 */
import type { Context, Hono } from 'hono';
import { z } from 'zod';
import { createMaterial, editMaterial, getMaterial } from '../../service/materials.ts';
import { searchMaterials } from '../../service/material-search.ts';
import { showVersion } from '../../service/versions.ts';
import { approve, retire, withdraw } from '../../service/lifecycle.ts';
import { checkSlug } from '../../registry/refs.ts';
import { InputError } from '../../errors.ts';
import { actorOf, type ApiEnv } from '../auth.ts';
import { notModified, versionHeaders } from '../caching.ts';
import { parseInput, readJson, readOptionalJson, readQuery } from '../validate.ts';
import type { RouteContext } from '../context.ts';

export const VERSION_PATH = '/api/v1/materials/:slug/versions/:n';

/** `slug@N` from the path, refusing a malformed slug or version number with 400. */
export function versionRef(c: Context): string {
  const slug = checkSlug(c.req.param('slug') ?? '');
  const n = c.req.param('n') ?? '';
  if (!/^[1-9][0-9]{0,8}$/.test(n)) {
    throw new InputError('version-syntax', `"${n}" is not a version number: versions are numbered 1, 2, 3, ...`);
  }
  return `${slug}@${n}`;
}

export function versionUrl(ref: string): string {
  const [slug, n] = ref.split('@');
  return `/api/v1/materials/${slug}/versions/${n}`;
}

const searchQuery = z.strictObject({ q: z.string().max(200).optional() });
const newMaterial = z.strictObject({
  slug: z.string().max(64),
  name: z.string().max(200),
  description: z.string().max(5000).optional(),
  tags: z.array(z.string().max(40)).max(50).optional(),
});
const materialEdit = z.strictObject({
  name: z.string().max(200).optional(),
  description: z.string().max(5000).optional(),
  tags: z.array(z.string().max(40)).max(50).optional(),
});
const reasonBody = z.strictObject({ reason: z.string().max(2000) });
const optionalReasonBody = z.strictObject({ reason: z.string().max(2000).optional() });

export function registerMaterialRoutes(app: Hono<ApiEnv>, ctx: RouteContext): void {
  const reader = ctx.requireRole('reader');
  const editor = ctx.requireRole('editor');
  const approver = ctx.requireRole('approver');

  app.get('/api/v1/materials', reader, (c) => {
    const { q } = parseInput(searchQuery, readQuery(c.req.url), 'query', 400);
    c.header('cache-control', 'no-cache');
    return c.json({ materials: searchMaterials(ctx.registry, q ?? '') });
  });

  app.post('/api/v1/materials', editor, async (c) => {
    const body = parseInput(newMaterial, await readJson(c.req), 'body');
    const material = createMaterial(ctx.registry, body, actorOf(c.get('principal')));
    c.header('location', `/api/v1/materials/${material.slug}`);
    return c.json(material, 201);
  });

  app.patch('/api/v1/materials/:slug', editor, async (c) => {
    const body = parseInput(materialEdit, await readJson(c.req), 'body');
    return c.json(editMaterial(ctx.registry, c.req.param('slug'), body, actorOf(c.get('principal'))));
  });

  app.get('/api/v1/materials/:slug', reader, (c) => {
    c.header('cache-control', 'no-cache');
    return c.json(getMaterial(ctx.registry, c.req.param('slug')));
  });

  app.get(VERSION_PATH, reader, (c) => {
    const version = showVersion(ctx.registry, versionRef(c));
    const headers = versionHeaders(
      { status: version.status, sha256: version.sha256, retiredAt: version.retired_at },
      { withToken: c.get('principal') !== null },
    );
    return notModified(c, headers) ?? c.json(version, 200, headers);
  });

  app.post(`${VERSION_PATH}/approve`, approver, async (c) => {
    const ref = versionRef(c);
    parseInput(z.strictObject({}), await readOptionalJson(c.req), 'body');
    return c.json(approve(ctx.registry, ref, actorOf(c.get('principal'))));
  });

  app.post(`${VERSION_PATH}/retire`, approver, async (c) => {
    const ref = versionRef(c);
    const { reason } = parseInput(reasonBody, await readOptionalJson(c.req), 'body');
    return c.json(retire(ctx.registry, ref, reason, actorOf(c.get('principal'))));
  });

  app.post(`${VERSION_PATH}/withdraw`, approver, async (c) => {
    const ref = versionRef(c);
    const { reason } = parseInput(optionalReasonBody, await readOptionalJson(c.req), 'body');
    return c.json(withdraw(ctx.registry, ref, actorOf(c.get('principal')), reason));
  });
}
