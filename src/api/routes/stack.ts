/**
 * POST /api/v1/stack: R, T, A, Ψ, Δ and colour of a design, as `nkledger stack --json` prints them. The body is
 * a design, or {"design": DESIGN, "lock": LOCKFILE} to resolve its registry refs through a lockfile; the CLI's
 * options are query fields. File sources are refused (the server's disk is not the client's); the work is
 * capped by the max_stack_work setting before anything is resolved. The compute, computeStack, runs on the
 * server's compute pool (a worker thread), never on the event loop; a full pool answers 503.
 */
import type { Hono } from 'hono';
import { z } from 'zod';
import { InputError } from '../../errors.ts';
import { parseWavelengthList } from '../../io/wavelength-list.ts';
import { parseLockfile } from '../../service/lock.ts';
import { parseStackOptions, resolveStackDesign, stackWork, STACK_POLARIZATIONS } from '../../service/stack.ts';
import { parseStackDesign } from '../../service/stack-design.ts';
import { renderStackPlot } from '../../service/stack-plot.ts';
import type { ApiEnv } from '../auth.ts';
import type { RouteContext } from '../context.ts';
import { HttpProblem } from '../problem.ts';
import { parseInput, readJson } from '../validate.ts';

const stackQuery = z.strictObject({
  at: z.string().min(1).max(100_000),
  angle: z.string().max(2000).optional(),
  polarization: z.enum(STACK_POLARIZATIONS).optional(),
  sweep: z.string().max(200).optional(),
  extrapolate: z.enum(['true', 'false']).optional(),
});

const BODY = '<request body>';

export function registerStackRoute(app: Hono<ApiEnv>, ctx: RouteContext): void {
  app.post('/api/v1/stack', ctx.requireRole('reader'), async (c) => {
    const q = parseInput(stackQuery, c.req.query(), 'query', 400);
    const accept = c.req.header('accept') ?? '';
    const svg = /image\/svg\+xml/.test(accept) && !/application\/json/.test(accept);
    const body = await readJson(c.req);
    const wrapped = body !== null && typeof body === 'object' && 'design' in body && !('layers' in body);
    const { design: designValue, lock: lockValue, ...rest } = (wrapped ? body : { design: body }) as Record<string, unknown>;
    if (Object.keys(rest).length)
      throw new InputError(
        'invalid-body',
        `body: unknown field${Object.keys(rest).length > 1 ? 's' : ''} ${Object.keys(rest)
          .map((k) => `"${k}"`)
          .join(', ')} beside "design" (known: design, lock)`,
        { field: 'body' },
        422,
      );
    const design = parseStackDesign(designValue, BODY);
    const wavelengths = parseWavelengthList(q.at, 'at');
    const options = parseStackOptions(
      { angle: q.angle, polarization: q.polarization, sweep: q.sweep, extrapolate: q.extrapolate === 'true' },
      wavelengths,
      { angle: 'angle', polarization: 'polarization', sweep: 'sweep' },
    );
    const cap = ctx.settings().max_stack_work;
    const work = stackWork(design, options);
    if (work > cap) {
      throw new InputError(
        'stack-too-much-work',
        `this request asks for ${work} units of work (layers × wavelengths × angles × sweep steps); at most ${cap} per request (setting max_stack_work)`,
        { field: 'at' },
      );
    }
    const lock = lockValue === undefined ? undefined : { lockfile: parseLockfile(lockValue, `${BODY} lock`), file: 'the posted lock' };
    const resolved = await resolveStackDesign(design, { registry: ctx.registry, designFile: BODY, designText: null, allowFiles: false, lock });
    const report = await ctx.compute.run({ kind: 'stack', design: resolved, options });
    c.header('cache-control', 'no-store');
    if (svg) return c.body(renderStackPlot(report), 200, { 'content-type': 'image/svg+xml' });
    if (accept && !/json|\*\/\*/.test(accept))
      throw new HttpProblem(406, 'not-acceptable', `a stack answer is application/json or image/svg+xml, not "${accept}"`);
    return c.json(report);
  });
}
