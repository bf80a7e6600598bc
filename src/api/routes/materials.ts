/**
 * Materials and versions: list/search, one material, one version (cached by content hash), and the
 * lifecycle writes. Each handler parses the request, calls the service function the CLI calls, and
 * renders JSON; the registry rules live in src/service, not here.
 */
import type { Context, Hono } from 'hono';
import { z } from 'zod';
import { createMaterial, editMaterial, getMaterial, history } from '../../service/materials.ts';
import { searchMaterials } from '../../service/material-search.ts';
import { showVersion } from '../../service/versions.ts';
import { approve, retire, withdraw } from '../../service/lifecycle.ts';
import { reviewQueue, reviewVersion } from '../../service/review.ts';
import { checkSlug } from '../../registry/refs.ts';
import { InputError } from '../../errors.ts';
import { actorOf, type ApiEnv } from '../auth.ts';
import { notModified, versionHeaders } from '../caching.ts';
import { parseInput, readJson, readOptionalJson, readQuery } from '../validate.ts';
import type { RouteContext } from '../context.ts';
import { MEASUREMENT_METHODS, VERSION_STATUSES } from '../../registry/schema.ts';
import type { MaterialRecord, VersionDetail, VersionRecord } from '../../registry/types.ts';
import {
  json,
  READ_ERRORS,
  AUTH_ERRORS,
  SLUG,
  SLUG_PATH,
  VERSION_NUMBER_PATTERN,
  VERSION_PATH_PARAMS,
  WRITE_ERRORS,
  problem,
  type Operation,
} from '../operations.ts';
import type { ReviewQueue, ReviewSummary } from '../../service/review.ts';

export const VERSION_PATH = '/api/v1/materials/:slug/versions/:n';

/** `slug@N` from the path, refusing a malformed slug or version number with 400. */
export function versionRef(c: Context): string {
  const slug = checkSlug(c.req.param('slug') ?? '');
  const n = c.req.param('n') ?? '';
  if (!VERSION_NUMBER_PATTERN.test(n)) {
    throw new InputError('version-syntax', `"${n}" is not a version number: versions are numbered 1, 2, 3, ...`);
  }
  return `${slug}@${n}`;
}

export function versionUrl(ref: string): string {
  const [slug, n] = ref.split('@');
  return `/api/v1/materials/${slug}/versions/${n}`;
}

const searchQuery = z.strictObject({ q: z.string().max(200).optional().describe('search term: slug, name, description or tag') });
const materialFields = {
  name: z.string().max(200),
  description: z.string().max(5000),
  tags: z.array(z.string().max(40)).max(50).describe('the whole tag set'),
};
const newMaterial = z
  .strictObject({ slug: SLUG, name: materialFields.name, description: materialFields.description.optional(), tags: materialFields.tags.optional() })
  .meta({ id: 'NewMaterial' });
const materialEdit = z.strictObject({
  name: materialFields.name.optional(),
  description: materialFields.description.optional(),
  tags: materialFields.tags.optional(),
  add_tags: z.array(z.string().max(40)).max(50).optional().describe('tags to add, after `tags` (the CLI’s --tag)'),
  remove_tags: z.array(z.string().max(40)).max(50).optional().describe('tags to remove, after `tags` (the CLI’s --untag)'),
});
const reasonBody = z.strictObject({ reason: z.string().max(2000) }).meta({ id: 'Reason' });
const optionalReasonBody = z.strictObject({ reason: z.string().max(2000).optional() }).meta({ id: 'OptionalReason' });
const approveBody = z
  .strictObject({
    accept_warnings: z
      .string()
      .max(2000)
      .optional()
      .describe('why the version is approved despite an inconsistent KK check or an unconverged fit; stored in the hashed audit event'),
  })
  .meta({ id: 'ApproveBody', description: 'empty, {}, or the reason for accepting blocking review findings' });

const timestamp = z.string().meta({ format: 'date-time' });
const MATERIAL = z
  .object({
    slug: z.string(),
    name: z.string(),
    description: z.string(),
    tags: z.array(z.string()),
    created_by: z.string(),
    created_at: timestamp,
    versions: z.number().int().min(0).describe('number of versions ever created'),
    latest_approved: z.number().int().nullable().describe('newest approved (not retired) version number'),
  })
  .meta({ id: 'Material' }) satisfies z.ZodType<MaterialRecord>;
const provenanceText = z.string().nullable();
const PROVENANCE = z.object({
  sample: provenanceText,
  substrate: provenanceText,
  process: provenanceText,
  instrument: provenanceText,
  method: z.enum(MEASUREMENT_METHODS).nullable(),
  angles_deg: z.array(z.number()).nullable(),
  measured_on: provenanceText,
  operator: provenanceText,
  source_file: provenanceText,
  source_sha256: provenanceText,
  notes: provenanceText,
  preamble: z.array(z.string()).optional(),
  absent_columns: z.array(z.string()).optional(),
});
const who = z.string().nullable();
/** A version without its content: lists, results of writes. */
export const VERSION_RECORD = z
  .object({
    ref: z.string().describe('the pin, slug@N'),
    slug: z.string(),
    version: z.number().int().min(1),
    status: z.enum(VERSION_STATUSES),
    sha256: z.string().regex(/^[0-9a-f]{64}$/),
    has_table: z.boolean(),
    model: z.string().nullable(),
    kk_verdict: z.string().nullable(),
    range_nm: z.tuple([z.number(), z.number()]),
    provenance: PROVENANCE,
    created_by: z.string(),
    created_at: timestamp,
    approved_by: who,
    approved_at: timestamp.nullable(),
    self_approved: z.boolean(),
    retired_by: who,
    retired_at: timestamp.nullable(),
    retire_reason: who,
    withdrawn_by: who,
    withdrawn_at: timestamp.nullable(),
    withdraw_reason: who,
  })
  .meta({ id: 'Version' }) satisfies z.ZodType<VersionRecord>;
export const VERSION_DETAIL = VERSION_RECORD.extend({
  content: z
    .object({
      table: z
        .object({ wavelengthNm: z.array(z.number()), n: z.array(z.number()), k: z.array(z.number()) })
        .nullable()
        .describe('the normalized table (optional sigmaN, sigmaK, sigmaEps1, sigmaEps2 arrays beside)'),
      fit: z.object({ model: z.string() }).nullable().describe('the stored fit report'),
      kk: z.object({ verdict: z.string() }).nullable().describe('the stored Kramers-Kronig report'),
    })
    .describe('the hashed content'),
  notices: z.array(z.string()),
  warnings: z.array(z.string()),
}).meta({ id: 'VersionDetail' }) satisfies z.ZodType<Omit<VersionDetail, 'content'>>;

const REVIEW_SUMMARY = z
  .object({
    ref: z.string(),
    status: z.enum(VERSION_STATUSES),
    sha256: z.string(),
    kk: z.object({
      verdict: z.enum(['consistent', 'inconsistent', 'uninformative', 'not-run']),
      summary: z.string().nullable(),
      misfit: z
        .object({
          tolerance: z.number().nullable(),
          rms_dn: z.number(),
          max_dn: z.number().nullable(),
          systematic_max_dn: z.number().nullable(),
          worst_nm: z.number().nullable(),
        })
        .nullable()
        .describe('misfit in n between the data and the KK-consistent representation'),
    }),
    fit: z
      .object({
        model: z.string(),
        converged: z.boolean(),
        iterations: z.number().int().nullable(),
        rms_n: z.number().nullable(),
        rms_k: z.number().nullable(),
        reduced_chi2: z.number().nullable(),
        diagnostics: z.array(
          z.object({
            rule: z.string(),
            message: z.string(),
            advice: z.string().optional(),
            option: z.enum(['fix', 'bounds', 'init', 'terms', 'range', 'weights', 'starts']).optional(),
            parameters: z.array(z.string()).optional(),
            value: z.number().optional(),
          }),
        ),
      })
      .nullable(),
    correlations: z.object({
      threshold: z.number().describe('pairs with |r| at or above it are listed'),
      pairs: z.array(z.object({ a: z.string(), b: z.string(), r: z.number() })),
    }),
    provenance: z.object({
      sample: provenanceText,
      instrument: provenanceText,
      method: provenanceText,
      measured_on: provenanceText,
      operator: provenanceText,
      source_file: provenanceText,
      source_sha256: provenanceText,
      created_by: z.string(),
      created_at: timestamp,
    }),
    blocking: z
      .array(z.object({ rule: z.enum(['kk-inconsistent', 'fit-not-converged']), field: z.string(), value: z.string(), message: z.string() }))
      .describe('findings that need accept_warnings before approval'),
  })
  .meta({ id: 'ReviewSummary' }) satisfies z.ZodType<ReviewSummary>;
const REVIEW_QUEUE = z
  .object({
    user: z.string(),
    may_approve: z.boolean(),
    reason: z.string().nullable(),
    own_drafts: z.number().int().min(0),
    drafts: z.array(REVIEW_SUMMARY.extend({ self: z.boolean() })),
  })
  .meta({ id: 'ReviewQueue' }) satisfies z.ZodType<ReviewQueue>;
const APPROVAL = VERSION_RECORD.extend({
  review: REVIEW_SUMMARY,
  accepted_warnings: z.object({ reason: z.string(), findings: z.array(z.string()) }).nullable(),
}).meta({ id: 'Approval' });

const lifecycle = (what: 'approve' | 'retire' | 'withdraw', summary: string, body: z.ZodType, required: boolean): Operation => ({
  method: 'post',
  path: `${VERSION_PATH}/${what}`,
  summary,
  role: 'approver',
  params: { path: VERSION_PATH_PARAMS },
  body: { required, content: { 'application/json': body } },
  responses: { 200: json('the version after the change', VERSION_RECORD), ...WRITE_ERRORS },
});

export const MATERIAL_OPERATIONS: Operation[] = [
  {
    method: 'get',
    path: '/api/v1/materials',
    summary: 'List materials, optionally filtered by a search term',
    role: 'reader',
    params: { query: searchQuery },
    responses: { 200: json('materials', z.object({ materials: z.array(MATERIAL) })), ...AUTH_ERRORS, 400: READ_ERRORS[400] },
  },
  {
    method: 'post',
    path: '/api/v1/materials',
    summary: 'Create a material',
    role: 'editor',
    body: { required: true, content: { 'application/json': newMaterial } },
    responses: { 201: json('the new material (Location header gives its URL)', MATERIAL), ...WRITE_ERRORS },
  },
  {
    method: 'get',
    path: '/api/v1/materials/:slug',
    summary: 'One material with all its versions',
    role: 'reader',
    params: { path: SLUG_PATH },
    responses: {
      200: json('the material and its versions, oldest first', z.object({ material: MATERIAL, versions: z.array(VERSION_RECORD) })),
      ...READ_ERRORS,
    },
  },
  {
    method: 'patch',
    path: '/api/v1/materials/:slug',
    summary: "Edit a material's name, description or tags (the slug never changes; audit-logged as material.edit)",
    role: 'editor',
    params: { path: SLUG_PATH },
    body: { required: true, content: { 'application/json': materialEdit } },
    responses: {
      200: json('the material, with "changed": the fields that changed', MATERIAL.extend({ changed: z.array(z.string()) })),
      ...WRITE_ERRORS,
    },
  },
  {
    method: 'get',
    path: '/api/v1/materials/:slug/history',
    summary: "A material's versions and its audit log, oldest first (`nkledger history`)",
    role: 'reader',
    params: { path: SLUG_PATH },
    responses: {
      200: json(
        'the material, its versions and its audit events',
        z.object({
          material: MATERIAL,
          versions: z.array(VERSION_RECORD),
          audit: z.array(
            z.object({
              id: z.number().int(),
              at: timestamp,
              actor: z.string(),
              action: z.string().describe('e.g. version.import, version.approve'),
              ref: z.string().nullable(),
              detail: z.record(z.string(), z.unknown()),
            }),
          ),
        }),
      ),
      ...READ_ERRORS,
    },
  },
  {
    method: 'get',
    path: VERSION_PATH,
    summary: 'One version: content, provenance and reports',
    description:
      'Approved and retired versions: ETag = "<sha256>.<status>"; Cache-Control: public, max-age=60 when approved (it may still be retired), public, max-age=31536000, immutable when retired (private instead of public when the request carries a token); If-None-Match gives 304. ' +
      'Drafts: Cache-Control: no-store. Retired versions carry a Deprecation header (RFC 9745) and a `warnings` entry.',
    role: 'reader',
    params: { path: VERSION_PATH_PARAMS, header: z.object({ 'If-None-Match': z.string().optional() }) },
    responses: { 200: json('the version', VERSION_DETAIL), 304: { description: 'not modified' }, ...READ_ERRORS },
  },
  {
    method: 'post',
    path: `${VERSION_PATH}/approve`,
    summary: 'Approve a draft (not by its creator, unless the registry allows self-approval), after its review',
    description:
      'A version whose Kramers-Kronig check is inconsistent or whose fit did not converge is refused (409, rule approval-warnings-unaccepted, ' +
      'with field, value, `blocking` and the `review`) unless accept_warnings says why; the reason is stored in the hashed audit event.',
    role: 'approver',
    params: { path: VERSION_PATH_PARAMS },
    body: { required: false, content: { 'application/json': approveBody } },
    responses: {
      200: json('the approved version, the review its approver was shown and the findings accepted', APPROVAL),
      ...WRITE_ERRORS,
      409: problem(
        'the two-person rule, a version that is not a draft, or blocking review findings without accept_warnings (then with review and blocking)',
      ),
    },
  },
  {
    method: 'get',
    path: `${VERSION_PATH}/review`,
    summary: "A version's review summary: KK verdict and misfit, fit convergence and diagnostics, strong correlations, provenance",
    description: 'Read from the stored record (nothing is re-fitted); the summary approve shows.',
    role: 'reader',
    params: { path: VERSION_PATH_PARAMS },
    responses: { 200: json('the review summary', REVIEW_SUMMARY), ...READ_ERRORS },
  },
  {
    method: 'get',
    path: '/api/v1/review',
    summary: "The drafts the token's user may approve (not their own), each with its review summary",
    description: 'Needs a token (who asks decides the list); a role below approver gets may_approve false and no drafts.',
    role: 'reader',
    responses: { 200: json('the drafts to review', REVIEW_QUEUE), ...AUTH_ERRORS },
  },
  lifecycle('retire', 'Retire an approved version (reason required)', reasonBody, true),
  lifecycle('withdraw', 'Withdraw a draft (reason optional)', optionalReasonBody, false),
];

export function registerMaterialRoutes(app: Hono<ApiEnv>, ctx: RouteContext): void {
  const reader = ctx.requireRole('reader');
  const editor = ctx.requireRole('editor');
  const approver = ctx.requireRole('approver');

  app.get('/api/v1/materials', reader, async (c) => {
    const { q } = parseInput(searchQuery, readQuery(c.req.url), 'query', 400);
    c.header('cache-control', 'no-cache');
    return c.json({ materials: await searchMaterials(ctx.registry, q ?? '') });
  });

  app.post('/api/v1/materials', editor, async (c) => {
    const body = parseInput(newMaterial, await readJson(c.req), 'body');
    const material = await createMaterial(ctx.registry, body, actorOf(c.get('principal')));
    c.header('location', `/api/v1/materials/${material.slug}`);
    return c.json(material, 201);
  });

  app.patch('/api/v1/materials/:slug', editor, async (c) => {
    const { add_tags, remove_tags, ...body } = parseInput(materialEdit, await readJson(c.req), 'body');
    const edit = { ...body, addTags: add_tags, removeTags: remove_tags };
    return c.json(await editMaterial(ctx.registry, c.req.param('slug'), edit, actorOf(c.get('principal'))));
  });

  app.get('/api/v1/materials/:slug', reader, async (c) => {
    c.header('cache-control', 'no-cache');
    return c.json(await getMaterial(ctx.registry, c.req.param('slug')));
  });

  app.get('/api/v1/materials/:slug/history', reader, async (c) => {
    c.header('cache-control', 'no-cache');
    return c.json(await history(ctx.registry, c.req.param('slug')));
  });

  app.get(VERSION_PATH, reader, async (c) => {
    const version = await showVersion(ctx.registry, versionRef(c));
    const headers = versionHeaders(
      { status: version.status, sha256: version.sha256, retiredAt: version.retired_at },
      { withToken: c.get('principal') !== null },
    );
    return notModified(c, headers) ?? c.json(version, 200, headers);
  });

  app.post(`${VERSION_PATH}/approve`, approver, async (c) => {
    const ref = versionRef(c);
    const body = parseInput(approveBody, await readOptionalJson(c.req), 'body');
    return c.json(await approve(ctx.registry, ref, actorOf(c.get('principal')), { acceptWarnings: body.accept_warnings }));
  });

  // The drafts the token's user may approve, with their review summaries (the CLI's `nkledger review`).
  app.get('/api/v1/review', reader, async (c) => {
    const principal = c.get('principal');
    c.header('cache-control', 'no-store');
    return c.json(await reviewQueue(ctx.registry, { user: actorOf(principal), role: principal?.role ?? null }));
  });

  // One version's review summary, any status (what approve shows).
  app.get(`${VERSION_PATH}/review`, reader, async (c) => {
    c.header('cache-control', 'no-cache');
    return c.json(await reviewVersion(ctx.registry, versionRef(c)));
  });

  app.post(`${VERSION_PATH}/retire`, approver, async (c) => {
    const ref = versionRef(c);
    const { reason } = parseInput(reasonBody, await readOptionalJson(c.req), 'body');
    return c.json(await retire(ctx.registry, ref, reason, actorOf(c.get('principal'))));
  });

  app.post(`${VERSION_PATH}/withdraw`, approver, async (c) => {
    const ref = versionRef(c);
    const { reason } = parseInput(optionalReasonBody, await readOptionalJson(c.req), 'body');
    return c.json(await withdraw(ctx.registry, ref, actorOf(c.get('principal')), reason));
  });
}
