/**
 * Versions named by any reference the CLI takes — `slug@N`, `slug@sha256:PREFIX`, a bare slug (latest approved) —
 * for clients in server mode (src/client): the version with its resolution notices and warnings, its export,
 * and the difference of two versions. The same service functions as `nkledger show`, `export` and `diff`.
 */
import type { Hono } from 'hono';
import { z } from 'zod';
import { SPECTRAL_UNITS } from '../../optics/units.ts';
import { parseOptionNumber } from '../../io/numbers.ts';
import { diffVersions } from '../../service/diff.ts';
import { exportVersion, VERSION_EXPORT_FORMATS } from '../../service/export-version.ts';
import { showVersion } from '../../service/versions.ts';
import type { VersionDiff } from '../../service/diff.ts';
import type { VersionExport } from '../../service/export-version.ts';
import { VERSION_STATUSES } from '../../registry/schema.ts';
import type { ApiEnv } from '../auth.ts';
import { parseInput, readQuery } from '../validate.ts';
import type { RouteContext } from '../context.ts';
import { json, READ_ERRORS, type Operation } from '../operations.ts';
import { VERSION_DETAIL } from './materials.ts';

const REF = z.string().min(1).max(200);
const refPath = z.object({ ref: REF.describe('slug@N, slug@sha256:PREFIX (8 to 64 hex digits) or a bare slug (its latest approved version)') });
const exportQuery = z.strictObject({
  format: z
    .enum(VERSION_EXPORT_FORMATS as ['csv', 'json'])
    .describe('csv: the table (a model-only version: the model on a grid); json: the whole record'),
  x_unit: z
    .enum(SPECTRAL_UNITS as unknown as [string, ...string[]])
    .optional()
    .describe('unit of the CSV x column (default nm)'),
  step_nm: z.string().max(40).optional().describe('grid step of a model-only CSV, nm (default 1)'),
});
const diffQuery = z.strictObject({ a: REF.describe('first version'), b: REF.describe('second version (Δ = b − a)') });

const EXPORT = z
  .object({
    ref: z.string(),
    sha256: z.string(),
    text: z.string().describe('the text `nkledger export` writes'),
    notices: z.array(z.string()),
    warnings: z.array(z.string()),
  })
  .meta({ id: 'VersionExport' }) satisfies z.ZodType<VersionExport>;
const side = z.object({
  ref: z.string(),
  sha256: z.string(),
  status: z.enum(VERSION_STATUSES),
  model: z.string().nullable(),
  range_nm: z.tuple([z.number(), z.number()]),
});
const largest = z.object({ max_abs: z.number(), at_nm: z.number(), rms: z.number() }).nullable();
const DIFF = z
  .object({
    a: side,
    b: side,
    identical_content: z.boolean(),
    model_changed: z.boolean(),
    parameters: z.array(
      z.object({
        name: z.string(),
        unit: z.string().nullable(),
        a: z.number().nullable(),
        b: z.number().nullable(),
        delta: z.number().nullable(),
        delta_sigmas: z.number().nullable(),
      }),
    ),
    common_range_nm: z.tuple([z.number(), z.number()]).nullable(),
    dn: largest,
    dk: largest,
    provenance: z.array(z.object({ field: z.string(), a: z.unknown(), b: z.unknown() })),
    curves: z
      .object({
        wavelength_nm: z.array(z.number()),
        n_a: z.array(z.number()),
        n_b: z.array(z.number()),
        k_a: z.array(z.number()),
        k_b: z.array(z.number()),
      })
      .nullable()
      .describe('n and k of both on the comparison grid, for plots'),
    notices: z.array(z.string()),
    warnings: z.array(z.string()),
  })
  .meta({ id: 'VersionDiff' }) satisfies z.ZodType<Omit<VersionDiff, 'provenance'>>;

export const REF_OPERATIONS: Operation[] = [
  {
    method: 'get',
    path: '/api/v1/refs/:ref',
    summary: 'A version by any reference the CLI takes, with its resolution notices and warnings (`nkledger show`)',
    role: 'reader',
    params: { path: refPath },
    responses: { 200: json('the version', VERSION_DETAIL), ...READ_ERRORS },
  },
  {
    method: 'get',
    path: '/api/v1/refs/:ref/export',
    summary: 'A version exported as `nkledger export` writes it (CSV of the table, or JSON of the record)',
    role: 'reader',
    params: { path: refPath, query: exportQuery },
    responses: { 200: json('the export', EXPORT), ...READ_ERRORS },
  },
  {
    method: 'get',
    path: '/api/v1/diff',
    summary: 'Compare two versions: parameters, the largest |Δn| and |Δk| over their common range, provenance (`nkledger diff`)',
    role: 'reader',
    params: { query: diffQuery },
    responses: { 200: json('the comparison', DIFF), ...READ_ERRORS },
  },
];

export function registerRefRoutes(app: Hono<ApiEnv>, ctx: RouteContext): void {
  const reader = ctx.requireRole('reader');

  app.get('/api/v1/refs/:ref', reader, async (c) => {
    parseInput(z.strictObject({}), readQuery(c.req.url), 'query', 400);
    c.header('cache-control', 'no-store');
    return c.json(await showVersion(ctx.registry, c.req.param('ref')));
  });

  app.get('/api/v1/refs/:ref/export', reader, async (c) => {
    const q = parseInput(exportQuery, readQuery(c.req.url), 'query', 400);
    const stepNm = q.step_nm === undefined ? undefined : parseOptionNumber(q.step_nm, 'step_nm', { above: 0 });
    c.header('cache-control', 'no-store');
    return c.json(await exportVersion(ctx.registry, c.req.param('ref'), q.format, { xUnit: q.x_unit as never, stepNm }));
  });

  app.get('/api/v1/diff', reader, async (c) => {
    const { a, b } = parseInput(diffQuery, readQuery(c.req.url), 'query', 400);
    c.header('cache-control', 'no-store');
    return c.json(await diffVersions(ctx.registry, a, b));
  });
}
