/**
 * HTTP caching of versions (RFC 9110 §8.8.3 ETag, §13.1.2 If-None-Match; RFC 9111 Cache-Control).
 * The content of approved and retired versions never changes, but an approved version's answer does
 * when it is retired (status, warnings, Deprecation), so the ETag names content hash AND status, and:
 * - retired is final (no transition leaves it): a year, `immutable`;
 * - approved may still be retired: APPROVED_MAX_AGE seconds, then revalidation (a 304 while still
 *   approved; after a retirement the changed ETag makes it a 200 with the retired answer);
 * - drafts and withdrawn versions may change or vanish from use: never stored (`no-store`).
 * docs/http-api.md "Caching" says the same to clients.
 */
import type { Context } from 'hono';
import type { VersionStatus } from '../registry/types.ts';

/**
 * A year, immutable. `public` for answers to requests without a token; `private` for answers to
 * requests with one: RFC 9111 §3.5 lets a shared cache store and reuse an answer to an
 * Authorization-bearing request when it says `public`, which would hand token-gated data to anyone
 * behind the same proxy. `private` keeps it in the client's own cache.
 */
export const IMMUTABLE_CACHE_CONTROL = 'public, max-age=31536000, immutable';
export const IMMUTABLE_PRIVATE_CACHE_CONTROL = 'private, max-age=31536000, immutable';

/** How long a cache may serve an approved version's answer without asking again: how late a retirement may show. */
export const APPROVED_MAX_AGE = 60;
export const APPROVED_CACHE_CONTROL = `public, max-age=${APPROVED_MAX_AGE}`;
export const APPROVED_PRIVATE_CACHE_CONTROL = `private, max-age=${APPROVED_MAX_AGE}`;

/** Approved or retired: the content never changes (the answer may still, by a retirement). */
export function isImmutable(status: VersionStatus): boolean {
  return status === 'approved' || status === 'retired';
}

/**
 * True when an If-None-Match header value matches `etag` (weak comparison, RFC 9110 §13.1.2); `*`
 * matches any current representation, also one without an ETag.
 */
export function ifNoneMatchHits(header: string | undefined, etag: string | undefined): boolean {
  if (!header) return false;
  if (header.trim() === '*') return true;
  const opaque = (tag: string) => tag.trim().replace(/^W\//, '');
  return etag !== undefined && header.split(',').some((tag) => opaque(tag) === opaque(etag));
}

/**
 * The response headers that say how a representation of a version may be cached, as a plain record
 * (@hono/node-server writes a plain record straight to the socket; a Headers object costs more):
 * - approved or retired: `ETag` = the content hash and the status (plus `variant`, e.g. "csv", for
 *   one of several formats of the same content), `Cache-Control` as in the header comment (`private`
 *   when the request carried a token, see above), and `Vary: Origin`, because a browser's answer carries CORS headers
 *   that an answer to a script does not (the CORS middleware adds Origin again on answers to
 *   browsers; a repeated Vary member means the same);
 * - retired also: `Deprecation` with the retirement time (RFC 9745, `@` + Unix seconds);
 * - draft or withdrawn: `Cache-Control: no-store`.
 */
export function versionHeaders(
  version: { status: VersionStatus; sha256: string; retiredAt: string | null },
  request: { withToken: boolean; variant?: string },
): Record<string, string> {
  if (!isImmutable(version.status)) return { 'cache-control': 'no-store' };
  const { withToken, variant } = request;
  const headers: Record<string, string> = {
    etag: `"${version.sha256}.${version.status}${variant ? `.${variant}` : ''}"`,
    'cache-control':
      version.status === 'retired'
        ? withToken
          ? IMMUTABLE_PRIVATE_CACHE_CONTROL
          : IMMUTABLE_CACHE_CONTROL
        : withToken
          ? APPROVED_PRIVATE_CACHE_CONTROL
          : APPROVED_CACHE_CONTROL,
    vary: 'Origin',
  };
  if (version.status === 'retired' && version.retiredAt) {
    headers.deprecation = `@${Math.floor(Date.parse(version.retiredAt) / 1000)}`;
  }
  return headers;
}

/**
 * 304 Not Modified when the request's If-None-Match names the ETag in `headers` (or is `*`), carrying
 * the same caching headers without the content type (RFC 9110 §15.4.5); undefined when the body
 * must be sent.
 */
export function notModified(c: Context, headers: Record<string, string>): Response | undefined {
  if (!ifNoneMatchHits(c.req.header('if-none-match'), headers.etag)) return undefined;
  const { 'content-type': _contentType, ...validators } = headers;
  return new Response(null, { status: 304, headers: validators });
}
