/**
 * Table uploads: POST /api/v1/materials/{slug}/versions stores a new draft through the import
 * pipeline (src/service/import-measurement.ts, the one `nkledger import` uses); POST /api/v1/fit and /api/v1/kk
 * run the fitter or the Kramers-Kronig check on an uploaded table and store nothing. Parsing, fits and
 * checks run on the compute pool's worker threads (src/service/compute-pool.ts); a full pool is 503.
 */
import type { Hono } from 'hono';
import { z } from 'zod';
import { InputError } from '../../errors.ts';
import { checkSlug } from '../../registry/refs.ts';
import { PROVENANCE_FIELDS } from '../../registry/types.ts';
import { storeMeasurement } from '../../service/import-measurement.ts';
import { actorOf, type ApiEnv } from '../auth.ts';
import { FIT_OPTION_FIELDS, fitOptionsFromFields, givenFitFields } from '../fit-fields.ts';
import { readTableUpload } from '../upload.ts';
import { parseInput } from '../validate.ts';
import type { RouteContext } from '../context.ts';
import { versionUrl } from './materials.ts';

const booleanText = z.enum(['true', 'false']).transform((t) => t === 'true');
const modelSpec = z.string().min(1).max(100);

/**
 * Provenance as form fields. source_sha256 is always computed from the uploaded bytes; source_file
 * defaults to the multipart file name (a raw text/csv body has none: give source_file=NAME).
 */
const provenanceFields = Object.fromEntries(
  PROVENANCE_FIELDS.filter((f) => f !== 'source_sha256').map((f) => [f, z.string().max(20_000).optional()]),
);
const versionFields = z.strictObject({ fit: modelSpec.optional(), ...FIT_OPTION_FIELDS, ...provenanceFields, kk: booleanText.optional() });
const fitOnlyFields = z.strictObject({ model: modelSpec, ...FIT_OPTION_FIELDS });
const kkFields = z.strictObject({
  tolerance: z
    .string()
    .regex(/^[0-9.eE+-]+$/)
    .transform(Number)
    .optional(),
});

export function registerUploadRoutes(app: Hono<ApiEnv>, ctx: RouteContext): void {
  const reader = ctx.requireRole('reader');

  app.post('/api/v1/materials/:slug/versions', ctx.requireRole('editor'), async (c) => {
    const slug = checkSlug(c.req.param('slug'));
    const upload = await readTableUpload(c);
    const { fit, kk, ...fields } = parseInput(versionFields, upload.fields, upload.fieldsIn, 400);
    const fitFields = Object.fromEntries(Object.entries(fields).filter(([k]) => k in FIT_OPTION_FIELDS));
    const provenance = Object.fromEntries(Object.entries(fields).filter(([k]) => !(k in FIT_OPTION_FIELDS))) as Record<string, string | undefined>;
    const unused = fit === undefined ? givenFitFields(fitFields) : [];
    if (unused.length) throw new InputError('bad-option', `${unused.join(', ')} configure a fit: add fit=MODEL`);
    const actor = actorOf(c.get('principal'));
    const input = {
      bytes: upload.bytes,
      file: upload.file,
      importOptions: upload.importOptions,
      fit: fit ? { ...fitOptionsFromFields(fitFields), model: fit } : undefined,
      kk,
    };
    // Parse, fit and KK on a worker thread; only the write transaction runs here.
    const prepared = await ctx.compute.run({ kind: 'measurement', input });
    const result = storeMeasurement(ctx.registry, { slug, file: upload.file, provenance }, prepared, actor);
    c.header('location', versionUrl(result.ref));
    return c.json(result, 201);
  });

  app.post('/api/v1/fit', reader, async (c) => {
    const upload = await readTableUpload(c);
    const { model, ...fitFields } = parseInput(fitOnlyFields, upload.fields, upload.fieldsIn, 400);
    const fitOptions = { ...fitOptionsFromFields(fitFields), model };
    const result = await ctx.compute.run({ kind: 'fit', bytes: upload.bytes, importOptions: upload.importOptions, fit: fitOptions });
    c.header('cache-control', 'no-store');
    return c.json(result);
  });

  app.post('/api/v1/kk', reader, async (c) => {
    const upload = await readTableUpload(c);
    const { tolerance } = parseInput(kkFields, upload.fields, upload.fieldsIn, 400);
    const result = await ctx.compute.run({ kind: 'kk', bytes: upload.bytes, importOptions: upload.importOptions, kk: { tolerance } });
    c.header('cache-control', 'no-store');
    return c.json(result);
  });
}
