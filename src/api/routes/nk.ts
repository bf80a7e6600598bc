/**
 * GET /api/v1/materials/{slug}/versions/{n}/nk: n and k of one version at a list or a range of
 * wavelengths, as JSON `{"wavelength_nm", "n", "k", ...}` or CSV (`Accept: text/csv`), evaluated by
 * the service function behind `nkledger eval REF`. Approved and retired versions are immutable, so the
 * answer for a URL never changes: it gets the version's ETag (per format), a year of caching, and is
 * kept rendered in memory (RepresentationCache) with its headers, so a repeated request costs a
 * status check (ChangeMemo: no SQLite read unless the registry changed) and a map lookup.
 */
import type { Hono } from 'hono';
import { z } from 'zod';
import { evaluateVersion, withUnitColumn } from '../../service/evaluate-version.ts';
import { versionStatus } from '../../service/version-state.ts';
import { versionSummary } from '../../service/versions.ts';
import { exportTable } from '../../io/export.ts';
import type { ApiEnv } from '../auth.ts';
import { isImmutable, notModified, versionHeaders } from '../caching.ts';
import { NK_BODY, NK_QUERY, negotiateNkFormat, parseNkBody, parseNkQuery, type NkRequest } from '../nk-query.ts';
import { READ_ERRORS, VERSION_PATH_PARAMS, problem, type Answer, type Operation } from '../operations.ts';
import { VERSION_STATUSES } from '../../registry/schema.ts';
import type { VersionEvaluation } from '../../service/evaluate-version.ts';
import { RepresentationCache } from '../representation-cache.ts';
import { ChangeMemo } from '../registry-changes.ts';
import type { RouteContext } from '../context.ts';
import { readJson, readQuery } from '../validate.ts';
import { VERSION_PATH, versionRef } from './materials.ts';

const NK_VALUES = z
  .object({
    ref: z.string(),
    sha256: z.string(),
    status: z.enum(VERSION_STATUSES),
    source: z.enum(['model', 'table']),
    model: z.string().nullable(),
    interpolation: z.enum(['linear', 'monotone-cubic']).nullable(),
    range_nm: z.tuple([z.number(), z.number()]),
    wavelength_nm: z.array(z.number()),
    n: z.array(z.number()),
    k: z.array(z.number()),
    extrapolated: z.array(z.boolean()).optional(),
    notices: z.array(z.string()),
    warnings: z.array(z.string()),
  })
  .meta({
    id: 'NkValues',
    description: 'with `unit`, also the x column in that unit (energy_eV, wavelength_um, wavenumber_cm-1)',
  }) satisfies z.ZodType<VersionEvaluation>;
const nkAnswer: Answer = {
  description: 'n,k at the asked wavelengths',
  content: { 'application/json': NK_VALUES, 'text/csv': { json: { type: 'string' } } },
};
const nkErrors = {
  ...READ_ERRORS,
  406: problem('Accept names neither JSON nor CSV'),
};

export const NK_OPERATIONS: Operation[] = [
  {
    method: 'get',
    path: `${VERSION_PATH}/nk`,
    summary: 'n and k of a version at a list or a range of wavelengths',
    description:
      'Give wavelengths_nm (a list, or start:stop:step items), or from_nm, to_nm and step_nm, or at with unit; at most max_nk_points. ' +
      'JSON by default; text/csv when Accept prefers it. Model-backed versions evaluate inside the validity range, table-only versions inside the measured range.',
    role: 'reader',
    params: { path: VERSION_PATH_PARAMS, query: NK_QUERY, header: z.object({ 'If-None-Match': z.string().optional() }) },
    responses: {
      200: nkAnswer,
      304: { description: 'not modified' },
      ...nkErrors,
      400: problem('bad wavelengths or too many points (setting max_nk_points), or a malformed slug or version number'),
      431: problem('the URL is too long: use POST with a JSON body'),
    },
  },
  {
    method: 'post',
    path: `${VERSION_PATH}/nk`,
    summary: 'n and k of a version at wavelengths given in a JSON body (lists too long for a URL)',
    description:
      'The fields of the GET query as JSON; wavelengths_nm may be an array of numbers or the same text as in the query. At most max_nk_points. ' +
      'The answer is the GET answer with Cache-Control: no-store.',
    role: 'reader',
    params: { path: VERSION_PATH_PARAMS },
    body: { required: true, content: { 'application/json': NK_BODY }, example: { wavelengths_nm: [450, 550, 650] } },
    responses: {
      200: nkAnswer,
      ...nkErrors,
      400: problem('too many points (setting max_nk_points), a body that is not JSON, or a malformed slug or version number'),
      413: problem('the body exceeds the max_body_bytes setting'),
      415: problem('the body is not application/json'),
      422: problem('bad wavelengths'),
    },
  },
];

const CONTENT_TYPES = { csv: 'text/csv; charset=utf-8; header=present', json: 'application/json' };

export function registerNkRoute(app: Hono<ApiEnv>, ctx: RouteContext): void {
  const cache = new RepresentationCache();
  const render = async (ref: string, request: NkRequest, format: 'json' | 'csv', withToken: boolean) => {
    const result = withUnitColumn(
      await evaluateVersion(ctx.registry, ref, request.wavelengthNm, { interpolation: request.interpolation, extrapolate: request.extrapolate }),
      request.unit,
    );
    const retiredAt = result.status === 'retired' ? (await versionSummary(ctx.registry, ref)).retired_at : null;
    const caching = versionHeaders({ status: result.status, sha256: result.sha256, retiredAt }, { withToken, variant: format });
    return {
      status: result.status,
      headers: { ...caching, 'content-type': CONTENT_TYPES[format], vary: caching.vary ? `${caching.vary}, Accept` : 'Accept' } as Record<
        string,
        string
      >,
      body: format === 'csv' ? exportTable({ wavelengthNm: result.wavelength_nm, n: result.n, k: result.k }, 'csv') : JSON.stringify(result),
    };
  };
  const statuses = new ChangeMemo<Awaited<ReturnType<typeof versionStatus>>>(ctx.changes);

  app.get(`${VERSION_PATH}/nk`, ctx.requireRole('reader'), async (c) => {
    const ref = versionRef(c);
    const format = negotiateNkFormat(c.req.header('accept'));
    const maxPoints = (await ctx.settings()).max_nk_points;
    const url = c.req.url;
    const withToken = c.get('principal') !== null;
    const key = `${ref} ${format} ${withToken ? 'private' : 'public'} ${maxPoints} ${url.slice(url.indexOf('?') + 1)}`;
    const status = await statuses.get(ref, () => versionStatus(ctx.registry, c.req.param('slug'), Number(c.req.param('n'))));
    let answer = status && isImmutable(status) ? cache.get(key, status) : undefined;
    if (!answer) {
      answer = await render(ref, parseNkQuery(readQuery(c.req.url), maxPoints), format, withToken);
      if (isImmutable(answer.status)) cache.set(key, answer);
    }
    // A plain Response with a plain header record, not c.body(): hono would copy the record into a
    // Headers object, which costs more than the rest of a cached answer. Nothing before this handler
    // sets headers through c.header(); the CORS middleware's headers are merged in by hono (c.res).
    return notModified(c, answer.headers) ?? new Response(answer.body, { status: 200, headers: answer.headers });
  });

  // The same answer for wavelength lists too long for a URL, asked in a JSON body. A POST answer is
  // not stored by caches (RFC 9110 §9.3.3 needs explicit freshness and Content-Location), so it says
  // no-store; the ETag still names the version's content and status.
  app.post(`${VERSION_PATH}/nk`, ctx.requireRole('reader'), async (c) => {
    const ref = versionRef(c);
    const format = negotiateNkFormat(c.req.header('accept'));
    const request = parseNkBody(await readJson(c.req), (await ctx.settings()).max_nk_points);
    const answer = await render(ref, request, format, c.get('principal') !== null);
    return new Response(answer.body, { status: 200, headers: { ...answer.headers, 'cache-control': 'no-store' } });
  });
}
