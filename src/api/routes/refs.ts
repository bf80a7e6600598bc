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
import type { ApiEnv } from '../auth.ts';
import { parseInput, readQuery } from '../validate.ts';
import type { RouteContext } from '../context.ts';

const exportQuery = z.strictObject({
  format: z.enum(VERSION_EXPORT_FORMATS as ['csv', 'json']),
  x_unit: z.enum(SPECTRAL_UNITS as unknown as [string, ...string[]]).optional(),
  step_nm: z.string().max(40).optional(),
});
const diffQuery = z.strictObject({ a: z.string().min(1).max(200), b: z.string().min(1).max(200) });

export function registerRefRoutes(app: Hono<ApiEnv>, ctx: RouteContext): void {
  const reader = ctx.requireRole('reader');

  app.get('/api/v1/refs/:ref', reader, (c) => {
    parseInput(z.strictObject({}), readQuery(c.req.url), 'query', 400);
    c.header('cache-control', 'no-store');
    return c.json(showVersion(ctx.registry, c.req.param('ref')));
  });

  app.get('/api/v1/refs/:ref/export', reader, (c) => {
    const q = parseInput(exportQuery, readQuery(c.req.url), 'query', 400);
    const stepNm = q.step_nm === undefined ? undefined : parseOptionNumber(q.step_nm, 'step_nm', { above: 0 });
    c.header('cache-control', 'no-store');
    return c.json(exportVersion(ctx.registry, c.req.param('ref'), q.format, { xUnit: q.x_unit as never, stepNm }));
  });

  app.get('/api/v1/diff', reader, (c) => {
    const { a, b } = parseInput(diffQuery, readQuery(c.req.url), 'query', 400);
    c.header('cache-control', 'no-store');
    return c.json(diffVersions(ctx.registry, a, b));
  });
}
