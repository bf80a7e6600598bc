/**
 * POST /api/v1/stack: R, T, A, Ψ, Δ and colour of a design, as `nkledger stack --json` prints them. The body is
 * a design, or {"design": DESIGN, "lock": LOCKFILE} to resolve its registry refs through a lockfile; the CLI's
 * options are query fields. File sources are refused (the server's disk is not the client's); the work is
 * capped by the max_stack_work setting before anything is resolved. One service function, runStackRequest, does
 * the work as for the CLI; its compute runs on the server's compute pool (a worker thread), never on the event
 * loop; a full pool answers 503.
 */
import type { Hono } from 'hono';
import { z } from 'zod';
import { parseLockfile } from '../../service/lock.ts';
import { runStackRequest, STACK_POLARIZATIONS } from '../../service/stack.ts';
import { STACK_DESIGN_SCHEMA } from '../../service/stack-design.ts';
import { renderStackPlot } from '../../service/stack-plot.ts';
import type { ApiEnv } from '../auth.ts';
import type { RouteContext } from '../context.ts';
import { HttpProblem } from '../problem.ts';
import { parseInput, readJson, readQuery } from '../validate.ts';
import { AUTH_ERRORS, BUSY, problem, type Operation } from '../operations.ts';
import { LOCKFILE } from './locks.ts';

const stackQuery = z.strictObject({
  at: z.string().min(1).max(100_000).meta({ example: '380:780:5', description: 'wavelengths in nm: a list and/or start:stop:step grids, as --at' }),
  angle: z.string().max(2000).optional().meta({ example: '0,45,70', description: 'angles of incidence, degrees, comma-separated (default 0)' }),
  polarization: z.enum(STACK_POLARIZATIONS).optional(),
  sweep: z
    .string()
    .max(200)
    .optional()
    .meta({ example: '1=0:600:5', description: 'LAYER=START:STOP:STEP: colour against the thickness (nm) of a layer (1-based)' }),
  extrapolate: z.enum(['true', 'false']).optional().describe('evaluate model sources outside their validity range'),
});

const STACK_DESIGN = STACK_DESIGN_SCHEMA.meta({ id: 'StackDesign', description: 'a stack design (schemas/stack-design.schema.json)' });
const numbers = z.array(z.number());
const COLOUR = z
  .object({
    ...Object.fromEntries(['X', 'Y', 'Z', 'x', 'y', 'L', 'a', 'b'].map((k) => [k, z.number().nullable()])),
    srgb_hex: z.string().regex(/^#[0-9a-f]{6}$/),
    in_gamut: z.boolean(),
  })
  .partial()
  .meta({ id: 'Colour', description: 'CIE 1931 2° under D65: XYZ, xy, CIELAB, sRGB' });
const STACK_ANSWER = z.object({
  design: z.object({}),
  materials: z.array(
    z
      .object({
        role: z.string(),
        source: z.enum(['registry', 'file', 'constant', 'model']),
        ref: z.string().nullable(),
        sha256: z.string().nullable(),
      })
      .partial(),
  ),
  notes: z.array(z.string()).optional(),
  warnings: z.array(z.string()).optional(),
  results: z.array(
    z
      .object({
        angle_deg: z.number(),
        wavelength_nm: numbers,
        R: numbers,
        T: numbers,
        A: numbers,
        Rs: numbers,
        Rp: numbers,
        Ts: numbers,
        Tp: numbers,
        psi_deg: numbers,
        delta_deg: numbers,
        colour: z.object({ reflected: COLOUR, transmitted: COLOUR }).partial().nullable(),
        sweep: z
          .object({
            layer: z.number().int(),
            rows: z.array(z.object({ thickness_nm: z.number(), reflected: COLOUR, transmitted: COLOUR }).partial()),
          })
          .partial(),
      })
      .partial(),
  ),
});

export const STACK_OPERATIONS: Operation[] = [
  {
    method: 'post',
    path: '/api/v1/stack',
    summary: 'Reflectance, transmittance, absorptance, Ψ/Δ and colour of a thin-film stack design; nothing is stored',
    description:
      'The body is a stack design (the JSON Schema of schemas/stack-design.schema.json), or {"design": DESIGN, "lock": LOCKFILE} to resolve ' +
      'its registry refs through a lockfile (refused when they disagree). {"file": …} sources are refused: the server\'s disk is not the client\'s. ' +
      'The work, layers × wavelengths × angles × sweep steps (each at least 1), is capped by the max_stack_work setting. ' +
      'R, T, A are fractions 0–1; colour is CIE 1931 2° under D65 on 380–780 nm at 5 nm, null (with a warning) when a material does not cover it. ' +
      "Ψ, Δ: Azzam & Bashara, N = n − ik (registry k ≥ 0), Δ in [0, 360); they ignore an incoherent substrate's back surface. " +
      'Accept: image/svg+xml answers the plot of `nkledger stack --plot` instead of JSON.',
    role: 'reader',
    params: { query: stackQuery },
    body: {
      required: true,
      content: {
        'application/json': z.union([STACK_DESIGN, z.strictObject({ design: STACK_DESIGN, lock: LOCKFILE.optional() })]),
      },
    },
    responses: {
      200: {
        description: 'one result per angle',
        content: { 'application/json': STACK_ANSWER, 'image/svg+xml': { json: { type: 'string' } } },
      },
      400: problem('bad design, option or wavelengths; a file source; a material that does not cover a wavelength; work over max_stack_work'),
      ...AUTH_ERRORS,
      404: problem('unknown material or version'),
      406: problem('Accept names neither JSON nor SVG'),
      413: problem('the body exceeds the max_body_bytes setting'),
      415: problem('the body is not application/json'),
      422: problem('the body is not a design'),
      ...BUSY,
    },
  },
];

const BODY = '<request body>';

export function registerStackRoute(app: Hono<ApiEnv>, ctx: RouteContext): void {
  app.post('/api/v1/stack', ctx.requireRole('reader'), async (c) => {
    const q = parseInput(stackQuery, readQuery(c.req.url), 'query', 400);
    const accept = c.req.header('accept') ?? '';
    const svg = /image\/svg\+xml/.test(accept) && !/application\/json/.test(accept);
    const body = await readJson(c.req);
    const wrapped = body !== null && typeof body === 'object' && 'design' in body && !('layers' in body);
    const { design: designValue, lock: lockValue, ...rest } = (wrapped ? body : { design: body }) as Record<string, unknown>;
    if (Object.keys(rest).length)
      throw new HttpProblem(
        422,
        'invalid-body',
        `body: unknown field${Object.keys(rest).length > 1 ? 's' : ''} ${Object.keys(rest)
          .map((k) => `"${k}"`)
          .join(', ')} beside "design" (known: design, lock)`,
        {},
        { field: 'body' },
      );
    const report = await runStackRequest({
      design: designValue,
      designFile: BODY,
      at: q.at,
      options: { angle: q.angle, polarization: q.polarization, sweep: q.sweep, extrapolate: q.extrapolate === 'true' },
      names: { at: 'at', angle: 'angle', polarization: 'polarization', sweep: 'sweep' },
      resolve: { registry: ctx.registry, allowFiles: false },
      lock: () => (lockValue === undefined ? undefined : { lockfile: parseLockfile(lockValue, `${BODY} lock`), file: 'the posted lock' }),
      maxWork: { limit: (await ctx.settings()).max_stack_work, setting: 'max_stack_work', field: 'at' },
      // The CPU-heavy part on the compute pool; a client that goes away stops it.
      compute: (design, options) => ctx.compute.run({ kind: 'stack', design, options }, c.req.raw.signal),
    });
    c.header('cache-control', 'no-store');
    if (svg) return c.body(renderStackPlot(report), 200, { 'content-type': 'image/svg+xml' });
    if (accept && !/json|\*\/\*/.test(accept))
      throw new HttpProblem(406, 'not-acceptable', `a stack answer is application/json or image/svg+xml, not "${accept}"`);
    return c.json(report);
  });
}
