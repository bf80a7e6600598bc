/**
 * GET /api/v1/materials/{slug}/versions/{n}/nk: n and k of one version at a list or a range of
 * wavelengths, as JSON `{"wavelength_nm", "n", "k", ...}` or CSV (`Accept: text/csv`), evaluated by
 * the service function behind `nkledger eval REF`. Approved and retired versions are immutable, so the
 * answer for a URL never changes: it gets the version's ETag (per format), a year of caching, and is
 * kept rendered in memory (RepresentationCache) so repeated requests cost one indexed lookup.
 */
import type { Context, Hono } from 'hono';
import { evaluateVersion } from '../../service/evaluate-version.ts';
import { versionStatus } from '../../service/version-state.ts';
import { versionSummary } from '../../service/versions.ts';
import { exportTable } from '../../io/export.ts';
import type { ApiEnv } from '../auth.ts';
import { isImmutable, versionCaching } from '../caching.ts';
import { negotiateNkFormat, parseNkQuery } from '../nk-query.ts';
import { RepresentationCache, type CachedRepresentation } from '../representation-cache.ts';
import { ChangeMemo } from '../registry-changes.ts';
import type { RouteContext } from '../context.ts';
import { markRetired, VERSION_PATH, versionRef } from './materials.ts';

const CSV_TYPE = 'text/csv; charset=utf-8; header=present';
const JSON_TYPE = 'application/json';

export function registerNkRoute(app: Hono<ApiEnv>, ctx: RouteContext): void {
  const cache = new RepresentationCache();
  const statuses = new ChangeMemo<ReturnType<typeof versionStatus>>(ctx.changes);

  function send(c: Context, answer: CachedRepresentation, format: string): Response {
    c.header('vary', 'Accept', { append: true });
    markRetired(c, answer.status, answer.retiredAt);
    return versionCaching(c, answer, format) ?? c.body(answer.body, 200, { 'content-type': answer.contentType });
  }

  app.get(`${VERSION_PATH}/nk`, ctx.requireRole('reader'), (c) => {
    const ref = versionRef(c);
    const format = negotiateNkFormat(c.req.header('accept'));
    const maxPoints = ctx.settings().max_nk_points;
    const url = c.req.url;
    const key = `${ref} ${format} ${maxPoints} ${url.slice(url.indexOf('?') + 1)}`;
    const status = statuses.get(ref, () => versionStatus(ctx.registry, c.req.param('slug'), Number(c.req.param('n'))));
    if (status && isImmutable(status)) {
      const hit = cache.get(key, status);
      if (hit) return send(c, hit, format);
    }

    const request = parseNkQuery(c.req.query(), maxPoints);
    const result = evaluateVersion(ctx.registry, ref, request.wavelengthNm, { interpolation: request.interpolation });
    const answer: CachedRepresentation = {
      sha256: result.sha256,
      status: result.status,
      retiredAt: result.status === 'retired' ? versionSummary(ctx.registry, ref).retired_at : null,
      contentType: format === 'csv' ? CSV_TYPE : JSON_TYPE,
      body:
        format === 'csv'
          ? exportTable({ wavelengthNm: result.wavelength_nm, n: result.n, k: result.k }, 'csv')
          : JSON.stringify(result),
    };
    if (isImmutable(result.status)) cache.set(key, answer);
    return send(c, answer, format);
  });
}
