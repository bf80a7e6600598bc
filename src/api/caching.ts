/**
 * HTTP caching of versions (RFC 9110 §8.8.3 ETag, §13.1.2 If-None-Match; RFC 9111 Cache-Control).
 * Approved and retired versions are immutable, so their representation is named by the content
 * SHA-256 and may be cached for a year; drafts and withdrawn versions may change or vanish from use
 * and are never stored by caches.
 */
import type { Context } from 'hono';
import type { VersionStatus } from '../registry/types.ts';

export const IMMUTABLE_CACHE_CONTROL = 'public, max-age=31536000, immutable';

export function isImmutable(status: VersionStatus): boolean {
  return status === 'approved' || status === 'retired';
}

/** True when an If-None-Match header value matches `etag` (weak comparison, RFC 9110 §13.1.2). */
export function ifNoneMatchHits(header: string | undefined, etag: string): boolean {
  if (!header) return false;
  if (header.trim() === '*') return true;
  const opaque = (tag: string) => tag.trim().replace(/^W\//, '');
  return header.split(',').some((tag) => opaque(tag) === opaque(etag));
}

/**
 * Set the caching headers for a representation of a version and answer 304 when the client
 * already holds it. `variant` distinguishes representations of the same content (e.g. "csv").
 * Returns the 304 response, or undefined when the handler should send the body.
 */
export function versionCaching(c: Context, version: { status: VersionStatus; sha256: string }, variant?: string): Response | undefined {
  if (!isImmutable(version.status)) {
    c.header('cache-control', 'no-store');
    return undefined;
  }
  const etag = `"${version.sha256}${variant ? `.${variant}` : ''}"`;
  c.header('etag', etag);
  c.header('cache-control', IMMUTABLE_CACHE_CONTROL);
  if (ifNoneMatchHits(c.req.header('if-none-match'), etag)) return c.body(null, 304);
  return undefined;
}
