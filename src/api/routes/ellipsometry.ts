/**
 * POST /api/v1/ellipsometry/fit: the answer of `nkledger ellipsometry fit --json`, from a multipart body with a
 * `data` file part (the Ψ/Δ file, read as the CLI reads it; import fields as for uploads) and a `sample` part (the
 * sample description JSON, as a file or a field); fields `starts` and `extrapolate`. File sources in the sample are
 * refused (the server's disk is not the client's). The fit, fitEllipsometry, runs on the server's compute pool,
 * never on the event loop; a full pool answers 503. Nothing is stored.
 */
import type { Hono } from 'hono';
import { z } from 'zod';
import { InputError } from '../../errors.ts';
import { parseOptionNumber } from '../../io/numbers.ts';
import { answerOf, DEFAULT_STARTS, MAX_STARTS, prepareEllipsometry } from '../../service/ellipsometry.ts';
import { renderEllipsometryPlot } from '../../service/ellipsometry-plot.ts';
import type { ApiEnv } from '../auth.ts';
import type { RouteContext } from '../context.ts';
import { HttpProblem } from '../problem.ts';
import { readTableUpload } from '../upload.ts';
import { parseInput } from '../validate.ts';

export const ELLIPSOMETRY_FIELDS = z.strictObject({
  sample: z
    .string()
    .min(1)
    .max(8 * 1024 * 1024),
  starts: z.string().max(20).optional(),
  extrapolate: z.enum(['true', 'false']).optional(),
});

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
      throw new InputError('upload-no-sample', 'the multipart body needs a "sample" part: the sample description (JSON)', { field: 'sample' }, 400);
    }
    const fields = parseInput(ELLIPSOMETRY_FIELDS, upload.fields, upload.fieldsIn, 400);
    const starts =
      fields.starts === undefined ? DEFAULT_STARTS : parseOptionNumber(fields.starts, 'starts', { integer: true, min: 1, max: MAX_STARTS });
    const prepared = await prepareEllipsometry({
      data: { bytes: upload.bytes, file: upload.file, importOptions: upload.importOptions },
      sample: { text: fields.sample, file: SAMPLE },
      resolve: { registry: ctx.registry, allowFiles: false },
    });
    const report = await ctx.compute.run({
      kind: 'ellipsometry',
      sample: prepared.sample,
      data: prepared.data.data,
      options: { starts, extrapolate: fields.extrapolate === 'true' },
    });
    c.header('cache-control', 'no-store');
    if (svg)
      return c.body(renderEllipsometryPlot(report, `${upload.file}: ${prepared.sample.design.name ?? 'sample'}`), 200, {
        'content-type': 'image/svg+xml',
      });
    return c.json(answerOf(prepared, report));
  });
}
