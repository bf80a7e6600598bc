/**
 * POST /api/v1/ellipsometry/fit: the answer of `nkledger ellipsometry fit --json`, from a multipart body with a
 * `data` file part (the Ψ/Δ file, read as the CLI reads it; import fields as for uploads) and a `sample` part (the
 * sample description JSON, as a file or a field); fields `starts` and `extrapolate`. File sources in the sample are
 * refused (the server's disk is not the client's). One service function, runEllipsometryRequest, reads, fits and answers; the fit runs on the server's compute pool,
 * never on the event loop; a full pool answers 503. Nothing is stored.
 */
import type { Hono } from 'hono';
import { z } from 'zod';
import { InputError } from '../../errors.ts';
import { parseOptionNumber } from '../../io/numbers.ts';
import { DEFAULT_STARTS, MAX_STARTS, runEllipsometryRequest } from '../../service/ellipsometry.ts';
import { renderEllipsometryPlot } from '../../service/ellipsometry-plot.ts';
import type { ApiEnv } from '../auth.ts';
import type { RouteContext } from '../context.ts';
import { HttpProblem } from '../problem.ts';
import { AUTH_ERRORS, BUSY, problem, type Operation } from '../operations.ts';
import { importFields, readTableUpload } from '../upload.ts';
import { parseInput } from '../validate.ts';

export const ELLIPSOMETRY_FIELDS = z.strictObject({
  sample: z
    .string()
    .min(1)
    .max(8 * 1024 * 1024)
    .describe('the sample description (JSON: a stack design whose layers list "fit"), as a file part or a text field'),
  starts: z
    .string()
    .max(20)
    .optional()
    .meta({ example: '5', description: `thickness starts across one interference period (default ${DEFAULT_STARTS}, at most ${MAX_STARTS})` }),
  extrapolate: z.enum(['true', 'false']).optional().describe('evaluate model sources outside their validity range'),
});

const numbers = z.array(z.number());
const ESTIMATE = z.object({ value: z.number(), stderr: z.number().nullable(), unit: z.string(), at_bound: z.boolean() });
const ELLIPSOMETRY_ANSWER = z.object({
  data: z.object({ file: z.string(), sha256: z.string(), angles_deg: numbers, points: z.number().int() }).partial(),
  parameters: z.record(z.string(), ESTIMATE),
  statistics: z
    .object({ points: z.number().int(), rms_psi_deg: z.number(), rms_delta_deg: z.number(), reduced_chi2: z.number(), iterations: z.number().int() })
    .partial(),
  correlations: z.object({ parameters: z.array(z.string()), matrix: z.array(numbers) }).partial(),
  warnings: z.array(z.object({ rule: z.string(), message: z.string() }).partial()),
  materials: z.array(z.object({ role: z.string(), ref: z.string().nullable(), sha256: z.string().nullable() }).partial()),
  curves: z.array(z.object({ angle_deg: z.number(), wavelength_nm: numbers, psi_deg: numbers, delta_deg: numbers }).partial()),
});

export const ELLIPSOMETRY_OPERATIONS: Operation[] = [
  {
    method: 'post',
    path: '/api/v1/ellipsometry/fit',
    summary: 'Layer thicknesses and dispersion parameters fitted to measured Ψ/Δ, ± 1σ; nothing is stored',
    description:
      'multipart/form-data with a `data` file part (the Ψ/Δ file, read as `nkledger ellipsometry fit` reads it, with the import fields of uploads) ' +
      'and a `sample` part (the sample description). Answers the JSON of `nkledger ellipsometry fit --json`; Accept: image/svg+xml answers ' +
      'the plot of measured and modelled Ψ, Δ. {"file": …} sources are refused. The fit runs on the compute threads.',
    role: 'reader',
    body: {
      required: true,
      content: {
        'multipart/form-data': z.strictObject({
          ...importFields.shape,
          ...ELLIPSOMETRY_FIELDS.shape,
          data: z.string().meta({ format: 'binary', description: 'the Ψ/Δ file' }),
        }),
      },
    },
    responses: {
      200: {
        description: 'the fitted parameters, statistics, correlations, warnings and curves',
        content: { 'application/json': ELLIPSOMETRY_ANSWER, 'image/svg+xml': { json: { type: 'string' } } },
      },
      400: problem('a Ψ/Δ file that cannot be read (file, line, column), a bad sample description or field, a file source, a missing part'),
      ...AUTH_ERRORS,
      404: problem('unknown material or version named by the sample'),
      406: problem('Accept names neither JSON nor SVG'),
      413: problem('the body exceeds the max_body_bytes setting'),
      415: problem('the body is not multipart/form-data'),
      ...BUSY,
    },
  },
];

/** The name the sample description gets in refusals. */
const SAMPLE = '<sample>';

export function registerEllipsometryRoute(app: Hono<ApiEnv>, ctx: RouteContext): void {
  app.post('/api/v1/ellipsometry/fit', ctx.requireRole('reader'), async (c) => {
    const accept = c.req.header('accept') ?? '';
    const svg = /image\/svg\+xml/.test(accept) && !/application\/json/.test(accept);
    if (accept && !svg && !/json|\*\/\*/.test(accept))
      throw new HttpProblem(406, 'not-acceptable', `an ellipsometry fit answer is application/json or image/svg+xml, not "${accept}"`);
    const upload = await readTableUpload(c, { part: 'data', textParts: ['sample'], multipartOnly: true });
    if (upload.fields.sample === undefined) {
      throw new InputError('upload-no-sample', 'the multipart body needs a "sample" part: the sample description (JSON)', { field: 'sample' });
    }
    const fields = parseInput(ELLIPSOMETRY_FIELDS, upload.fields, upload.fieldsIn, 400);
    const starts =
      fields.starts === undefined ? DEFAULT_STARTS : parseOptionNumber(fields.starts, 'starts', { integer: true, min: 1, max: MAX_STARTS });
    const { prepared, report, answer } = await runEllipsometryRequest(
      {
        data: { bytes: upload.bytes, file: upload.file, importOptions: upload.importOptions },
        sample: { text: fields.sample, file: SAMPLE },
        resolve: { registry: ctx.registry, allowFiles: false },
        options: { starts, extrapolate: fields.extrapolate === 'true' },
      },
      (sample, data, options) => ctx.compute.run({ kind: 'ellipsometry', sample, data, options }, c.req.raw.signal),
    );
    c.header('cache-control', 'no-store');
    if (svg)
      return c.body(renderEllipsometryPlot(report, `${upload.file}: ${prepared.sample.design.name ?? 'sample'}`), 200, {
        'content-type': 'image/svg+xml',
      });
    return c.json(answer);
  });
}
