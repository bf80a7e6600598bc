/**
 * Who is acting: every registry write records a user name, and the two-person rule compares them. Names are
 * stored in Unicode NFKC form and compared by their case-folded key, so "ADA", "Ada" and "ａｄａ" (full-width)
 * are one person. Names that only look like another are refused outright: control and invisible format
 * characters (zero-width space, joiners, bidi controls), and letters mixing scripts ("Аda" with a Cyrillic А).
 * (Unicode TR 15 for NFKC, TR 39 "Unicode Security Mechanisms" for the mixed-script and invisible-character
 * cases.)
 */
import { InputError } from '../errors.ts';

export const MAX_ACTOR_CHARS = 100;

/** Characters no user name may hold: controls, format (zero-width, bidi), surrogates, private use, unassigned, line/paragraph separators. */
const FORBIDDEN = /[\p{Cc}\p{Cf}\p{Cs}\p{Co}\p{Cn}\p{Zl}\p{Zp}]/u;

/** Scripts told apart for the mixed-script rule; letters of any other script count as one "other" script. */
const SCRIPTS = [
  'Latin',
  'Cyrillic',
  'Greek',
  'Armenian',
  'Georgian',
  'Hebrew',
  'Arabic',
  'Devanagari',
  'Bengali',
  'Thai',
  'Han',
  'Hiragana',
  'Katakana',
  'Hangul',
].map((name) => [name, new RegExp(`\\p{Script=${name}}`, 'u')] as const);
/** Script sets written together in one name by convention (TR 39 §5.1: Japanese and Korean). */
const ALLOWED_MIXES = [new Set(['Han', 'Hiragana', 'Katakana']), new Set(['Han', 'Hangul'])];

function scriptsOf(name: string): Set<string> {
  const found = new Set<string>();
  for (const ch of name) {
    if (!/\p{L}/u.test(ch)) continue; // digits, punctuation, spaces, combining marks belong to no one script
    found.add(SCRIPTS.find(([, re]) => re.test(ch))?.[0] ?? 'other');
  }
  return found;
}

function refuse(actor: string, why: string): never {
  throw new InputError('actor-invalid', `${JSON.stringify(actor)} is not a user name: ${why}`);
}

/** Check a user name and return it in the form stored (trimmed, NFKC). */
export function checkActor(actor: string): string {
  const name = actor.normalize('NFKC').trim();
  if (name === '' || name.length > MAX_ACTOR_CHARS) refuse(actor, `1 to ${MAX_ACTOR_CHARS} printable characters`);
  const bad = FORBIDDEN.exec(name);
  if (bad) refuse(actor, `it holds the invisible or control character U+${bad[0].codePointAt(0)!.toString(16).toUpperCase().padStart(4, '0')}`);
  const scripts = scriptsOf(name);
  if (scripts.size > 1 && !ALLOWED_MIXES.some((mix) => [...scripts].every((s) => mix.has(s)))) {
    refuse(actor, `it mixes letters of the ${[...scripts].sort().join(' and ')} scripts (a look-alike of another name)`);
  }
  return name;
}

/** The key two names are compared by: NFKC with case folded (upper then lower case folds ß to ss, as full case folding does). */
export function userKey(name: string): string {
  return name.normalize('NFKC').trim().toUpperCase().toLowerCase().normalize('NFKC');
}

/** Are two user names the same person for the two-person rule? */
export function sameUser(a: string, b: string): boolean {
  return userKey(a) === userKey(b);
}
