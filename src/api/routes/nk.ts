/**
 * GET /api/v1/materials/{slug}/versions/{n}/nk: n and k of one version at a list or a range of
 * wavelengths, as JSON `{"wavelength_nm", "n", "k", ...}` or CSV (`Accept: text/csv`), evaluated by
 * the service function behind `nkledger eval REF`. Approved and retired versions are immutable, so the
 * answer for a URL never changes: it gets the version's ETag (per format) and a year of caching.
 */
import type { Hono } from 'hono';
import { evaluateVersion } from '../../service/evaluate-version.ts';
import { exportTable } from '../../io/export.ts';
import type { ApiEnv } from '../auth.ts';
import { versionCaching } from '../caching.ts';
import { negotiateNkFormat, parseNkQuery } from '../nk-query.ts';
import type { RouteContext } from '../context.ts';
import { markRetired, VERSION_PATH, versionRef } from './materials.ts';
import { versionSummary } from '../../service/versions.ts';

export function registerNkRoute(app: Hono<ApiEnv>, ctx: RouteContext): void {
  app.get(`${VERSION_PATH}/nk`, ctx.requireRole('reader'), (c) => {
    const ref = versionRef(c);
    const format = negotiateNkFormat(c.req.header('accept'));
    const request = parseNkQuery(c.req.query(), ctx.settings().max_nk_points);
    const result = evaluateVersion(ctx.registry, ref, request.wavelengthNm, { interpolation: request.interpolation });
    c.header('vary', 'Accept');
    if (result.status === 'retired') markRetired(c, versionSummary(ctx.registry, ref));
    const notModified = versionCaching(c, result, format);
    if (notModified) return notModified;
    if (format === 'csv') {
      const csv = exportTable({ wavelengthNm: result.wavelength_nm, n: result.n, k: result.k }, 'csv');
      return c.body(csv, 200, { 'content-type': 'text/csv; charset=utf-8; header=present' });
    }
    return c.json(result);
  });
}
