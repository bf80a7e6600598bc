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
import { storeMeasurement, storeMeasurements } from '../../service/import-measurement.ts';
import { actorOf, type ApiEnv } from '../auth.ts';
import { FIT_OPTION_FIELDS, fitOptionsFromFields, givenFitFields } from '../fit-fields.ts';
import { readTableUpload, UPLOAD_ERRORS, uploadDescription, type TableUpload } from '../upload.ts';
import { decimalField, parseInput } from '../validate.ts';
import type { RouteContext } from '../context.ts';
import { AUTH_ERRORS, BUSY, json, problem, SLUG_PATH, WRITE_ERRORS, type Operation } from '../operations.ts';
import { versionUrl } from './materials.ts';
import { VERSION_STATUSES } from '../../registry/schema.ts';

const booleanText = z.enum(['true', 'false']).transform((t) => t === 'true');
const modelSpec = z.string().min(1).max(100).meta({ example: 'tauc-lorentz', description: 'model spec, e.g. tauc-lorentz or sellmeier:3' });

/**
 * Provenance as form fields. source_sha256 is always computed from the uploaded bytes; source_file
 * defaults to the multipart file name (a raw text/csv body has none: give source_file=NAME).
 */
const provenanceFields = Object.fromEntries(
  PROVENANCE_FIELDS.filter((f) => f !== 'source_sha256').map((f) => [
    f,
    z
      .string()
      .max(20_000)
      .optional()
      .describe(f === 'source_file' ? 'default: the file part name' : `provenance: ${f}`),
  ]),
);
const versionFields = z.strictObject({
  fit: modelSpec.optional().describe('model spec to fit and store with the version; the other fit fields need it'),
  ...FIT_OPTION_FIELDS,
  ...provenanceFields,
  kk: booleanText.optional().describe('false: skip the Kramers-Kronig check'),
});
const fitOnlyFields = z.strictObject({ model: modelSpec, ...FIT_OPTION_FIELDS });
const kkFields = z.strictObject({
  tolerance: decimalField('tolerance')
    .refine((v) => v > 0, 'tolerance must be positive (a misfit in n, e.g. 0.005)')
    .optional()
    .describe('largest acceptable systematic misfit in n'),
});

const CREATED_VERSION = z
  .object({ ref: z.string().meta({ example: 'sin-pecvd-a@3' }), version: z.number().int(), sha256: z.string(), status: z.enum(VERSION_STATUSES) })
  .meta({ id: 'CreatedVersion' });
const FIT_REPORT = z
  .object({
    model: z.string(),
    parameters: z.record(z.string(), z.object({ value: z.number(), stderr: z.number().nullable().optional(), unit: z.string() })),
    statistics: z.object({ points: z.number().int() }),
    warnings: z.array(z.string()),
    kk_consistent: z.boolean(),
    range_nm: z.tuple([z.number(), z.number()]).describe("the fitted rows' wavelength range: the model's validity range"),
  })
  .meta({ id: 'FitReport' });
const KK_REPORT = z
  .object({
    verdict: z.enum(['consistent', 'inconsistent', 'uninformative']),
    summary: z.string(),
    tolerance: z.number(),
    rms_dn: z.number(),
    max_dn: z.number(),
    worst_nm: z.number(),
    points: z.number().int(),
    range_nm: z.tuple([z.number(), z.number()]),
    bands: z.array(z.object({ band: z.unknown(), points: z.number().int() })),
  })
  .meta({ id: 'KkReport' });
const withWarnings = (report: z.ZodType) => z.object({ report, warnings: z.array(z.string()).describe("the uploaded table's import warnings") });

const versionUpload = uploadDescription(versionFields);
const fitUpload = uploadDescription(fitOnlyFields);
const kkUpload = uploadDescription(kkFields);

export const UPLOAD_OPERATIONS: Operation[] = [
  {
    method: 'post',
    path: '/api/v1/materials/:slug/versions',
    summary: 'Upload a table as a new draft version (optionally fitted with a model)',
    description:
      'The fields go in the query with a text body, or as form fields beside the `table` part of a multipart body. Unknown fields are refused.',
    role: 'editor',
    params: { path: SLUG_PATH, query: versionUpload.query },
    body: versionUpload.body,
    responses: {
      201: json('the new draft (Location header gives its URL)', CREATED_VERSION),
      ...WRITE_ERRORS,
      ...UPLOAD_ERRORS,
      422: problem('the fit or the Kramers-Kronig check could not produce a trustworthy result'),
      ...BUSY,
    },
  },
  {
    method: 'post',
    path: '/api/v1/materials/:slug/imports',
    summary: 'Upload several tables as new drafts of one material, all or none (`nkledger import A B C`)',
    description:
      'multipart/form-data with one `table` part per file and the upload fields once (they apply to every table). Each table is parsed, fitted and checked first; a refusal names its file and nothing is stored.',
    role: 'editor',
    params: { path: SLUG_PATH },
    body: {
      required: true,
      content: {
        'multipart/form-data': versionUpload.query.extend({
          table: z.array(z.string().meta({ format: 'binary' })).describe('the table files, one part each'),
        }),
      },
    },
    responses: {
      201: json('the new drafts, in the order of the parts', z.object({ versions: z.array(CREATED_VERSION) })),
      ...WRITE_ERRORS,
      ...UPLOAD_ERRORS,
      422: problem('a fit or a Kramers-Kronig check could not produce a trustworthy result'),
      ...BUSY,
    },
  },
  {
    method: 'post',
    path: '/api/v1/fit',
    summary: 'Fit a dispersion model to an uploaded table; nothing is stored',
    description: 'The fields go in the query with a text body, or as form fields beside the `table` part of a multipart body.',
    role: 'reader',
    params: { query: fitUpload.query },
    body: fitUpload.body,
    responses: {
      200: json('fit report', withWarnings(FIT_REPORT)),
      ...UPLOAD_ERRORS,
      422: problem('the fit failed'),
      ...AUTH_ERRORS,
      ...BUSY,
    },
  },
  {
    method: 'post',
    path: '/api/v1/kk',
    summary: 'Kramers-Kronig consistency check of an uploaded table; nothing is stored',
    description: 'The fields go in the query with a text body, or as form fields beside the `table` part of a multipart body.',
    role: 'reader',
    params: { query: kkUpload.query },
    body: kkUpload.body,
    responses: { 200: json('KK report', withWarnings(KK_REPORT)), ...UPLOAD_ERRORS, 422: problem('the check failed'), ...AUTH_ERRORS, ...BUSY },
  },
];

/** The fields of a version upload: fit options, KK switch and provenance, refused together as the CLI refuses its flags. */
function measurementFields(upload: TableUpload) {
  const { fit, kk, ...fields } = parseInput(versionFields, upload.fields, upload.fieldsIn, 400);
  const fitFields = Object.fromEntries(Object.entries(fields).filter(([k]) => k in FIT_OPTION_FIELDS)) as Record<string, string | undefined>;
  const provenance = Object.fromEntries(Object.entries(fields).filter(([k]) => !(k in FIT_OPTION_FIELDS))) as Record<string, string | undefined>;
  const unused = fit === undefined ? givenFitFields(fitFields) : [];
  if (unused.length) throw new InputError('bad-option', `${unused.join(', ')} configure a fit: add fit=MODEL`);
  return { fit: fit ? { ...fitOptionsFromFields(fitFields), model: fit } : undefined, kk, provenance };
}

export function registerUploadRoutes(app: Hono<ApiEnv>, ctx: RouteContext): void {
  const reader = ctx.requireRole('reader');

  app.post('/api/v1/materials/:slug/versions', ctx.requireRole('editor'), async (c) => {
    const slug = checkSlug(c.req.param('slug'));
    const upload = await readTableUpload(c);
    const { fit, kk, provenance } = measurementFields(upload);
    const actor = actorOf(c.get('principal'));
    const input = { bytes: upload.bytes, file: upload.file, importOptions: upload.importOptions, fit, kk };
    // Parse, fit and KK on a worker thread (stopped if the client disconnects); only the write transaction runs here.
    const prepared = await ctx.compute.run({ kind: 'measurement', input }, c.req.raw.signal);
    const result = await storeMeasurement(ctx.registry, { slug, file: upload.file, provenance }, prepared, actor);
    c.header('location', versionUrl(result.ref));
    return c.json(result, 201);
  });

  // Several tables (multipart, one "table" part each) as drafts of one material, all or none, as
  // `nkledger import A B C` does: each is parsed, fitted and checked first (in order, on the compute threads;
  // a refusal names its file), then all are stored in one transaction.
  app.post('/api/v1/materials/:slug/imports', ctx.requireRole('editor'), async (c) => {
    const slug = checkSlug(c.req.param('slug'));
    const upload = await readTableUpload(c, { several: true });
    const { fit, kk, provenance } = measurementFields(upload);
    const actor = actorOf(c.get('principal'));
    const prepared = [];
    for (const t of upload.tables)
      prepared.push(
        await ctx.compute.run(
          { kind: 'measurement', input: { bytes: t.bytes, file: t.file, importOptions: { ...upload.importOptions, file: t.file }, fit, kk } },
          c.req.raw.signal,
        ),
      );
    const inputs = upload.tables.map((t) => ({ slug, file: t.file, provenance }));
    return c.json({ versions: await storeMeasurements(ctx.registry, inputs, prepared, actor) }, 201);
  });

  app.post('/api/v1/fit', reader, async (c) => {
    const upload = await readTableUpload(c);
    const { model, ...fitFields } = parseInput(fitOnlyFields, upload.fields, upload.fieldsIn, 400);
    const fitOptions = { ...fitOptionsFromFields(fitFields), model };
    const result = await ctx.compute.run(
      { kind: 'fit', bytes: upload.bytes, importOptions: upload.importOptions, fit: fitOptions },
      c.req.raw.signal,
    );
    c.header('cache-control', 'no-store');
    return c.json(result);
  });

  app.post('/api/v1/kk', reader, async (c) => {
    const upload = await readTableUpload(c);
    const { tolerance } = parseInput(kkFields, upload.fields, upload.fieldsIn, 400);
    const result = await ctx.compute.run(
      { kind: 'kk', bytes: upload.bytes, importOptions: upload.importOptions, kk: { tolerance } },
      c.req.raw.signal,
    );
    c.header('cache-control', 'no-store');
    return c.json(result);
  });
}
