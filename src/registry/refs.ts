/**
 * References to versions: `slug@N` (a pin by number), `slug@sha256:PREFIX` (a pin by content hash,
 * at least MIN_HASH_PREFIX hex digits) and a bare `slug` (the latest approved version: not a pin).
 */
import { InputError } from '../errors.ts';

/** Slugs: lowercase letters and digits in hyphen-separated words, at most 64 characters. */
export const SLUG_PATTERN = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;
export const MAX_SLUG_LENGTH = 64;
/** Shortest hash prefix accepted in `slug@sha256:PREFIX`. */
export const MIN_HASH_PREFIX = 8;

export type ParsedRef =
  | { kind: 'number'; slug: string; version: number }
  | { kind: 'hash'; slug: string; hashPrefix: string }
  | { kind: 'latest'; slug: string };

export function checkSlug(slug: string): string {
  if (slug.length > MAX_SLUG_LENGTH || !SLUG_PATTERN.test(slug)) {
    throw new InputError(
      'slug-syntax',
      `"${slug}" is not a valid material slug: use lowercase letters, digits and single hyphens (e.g. sin-pecvd-a), at most ${MAX_SLUG_LENGTH} characters`,
    );
  }
  return slug;
}

export function parseRef(ref: string): ParsedRef {
  const text = ref.trim();
  const at = text.indexOf('@');
  if (at < 0) return { kind: 'latest', slug: checkSlug(text) };
  const slug = checkSlug(text.slice(0, at));
  const pin = text.slice(at + 1);
  if (/^[1-9][0-9]*$/.test(pin)) return { kind: 'number', slug, version: Number(pin) };
  const hash = /^sha256:([0-9a-fA-F]+)$/.exec(pin);
  if (hash) {
    const prefix = hash[1].toLowerCase();
    if (prefix.length < MIN_HASH_PREFIX || prefix.length > 64) {
      throw new InputError('ref-hash-prefix', `"${ref}": a hash prefix needs ${MIN_HASH_PREFIX} to 64 hex digits`);
    }
    return { kind: 'hash', slug, hashPrefix: prefix };
  }
  throw new InputError('ref-syntax', `"${ref}" is not a reference: use slug@N, slug@sha256:PREFIX or a bare slug`);
}

export function formatRef(slug: string, version: number): string {
  return `${slug}@${version}`;
}
