/**
 * Sign-in state and protection of state-changing forms.
 *
 * - The session cookie carries only a random secret (src/service/web-sessions.ts keeps its SHA-256):
 *   HttpOnly (scripts cannot read it), SameSite=Strict (no other site's page sends it), Path=/, Secure when
 *   the page was reached over HTTPS (directly or, per X-Forwarded-Proto, behind a TLS proxy).
 * - Every POST must come from a page of this server: its Origin (or, when a browser sends none, its Referer)
 *   must equal this server's origin, and its form must carry the session's CSRF secret (field `csrf`). The
 *   sign-in form, before any session exists, carries a one-off secret that must equal a short-lived cookie.
 */
import { randomBytes } from 'node:crypto';
import type { MiddlewareHandler } from 'hono';
import { getCookie, setCookie, deleteCookie } from 'hono/cookie';
import { HttpProblem } from '../http-status.ts';
import type { TokenRole } from '../registry/schema-auth.ts';
import { roleAllows } from '../service/tokens.ts';
import { csrfMatches, findSession, SESSION_HOURS, type WebSession } from '../service/web-sessions.ts';
import type { PageContext, WebContext, WebEnv } from './context.ts';

export const SESSION_COOKIE = 'nkl_session';
export const SIGN_IN_COOKIE = 'nkl_sign_in';

/** The origin the browser sees: the request's, with the scheme a TLS-terminating proxy reports. */
export function serverOrigin(c: WebContext): string {
  const url = new URL(c.req.url);
  const proto = c.req.header('x-forwarded-proto')?.split(',')[0].trim().toLowerCase();
  return `${proto === 'https' || proto === 'http' ? proto : url.protocol.slice(0, -1)}://${url.host}`;
}

const overHttps = (c: WebContext) => serverOrigin(c).startsWith('https:');

function cookieOptions(c: WebContext, maxAgeSeconds: number, path = '/') {
  return { httpOnly: true, sameSite: 'Strict' as const, secure: overHttps(c), path, maxAge: maxAgeSeconds };
}

export function setSessionCookie(c: WebContext, secret: string): void {
  setCookie(c, SESSION_COOKIE, secret, cookieOptions(c, SESSION_HOURS * 3600));
}

export function clearSessionCookie(c: WebContext): void {
  deleteCookie(c, SESSION_COOKIE, { path: '/', secure: overHttps(c) });
}

/** A one-off secret for the sign-in form, also set as a cookie for 15 minutes (double submit). */
export function signInSecret(c: WebContext): string {
  const secret = randomBytes(18).toString('base64url');
  setCookie(c, SIGN_IN_COOKIE, secret, cookieOptions(c, 900, '/sign-in'));
  return secret;
}

export function signInSecretMatches(c: WebContext, presented: unknown): boolean {
  const expected = getCookie(c, SIGN_IN_COOKIE);
  return expected !== undefined && csrfMatches(expected, presented);
}

/** Loads the session (if any) for every page. */
export function loadSession(ctx: PageContext): MiddlewareHandler<WebEnv> {
  return async (c, next) => {
    const secret = getCookie(c, SESSION_COOKIE);
    const session = secret ? ((await findSession(ctx.registry, secret)) ?? null) : null;
    c.set('session', session);
    return next();
  };
}

/** The Origin of a POST (or its Referer's origin when the browser sent no Origin), else undefined. */
function requestOrigin(c: WebContext): string | undefined {
  const origin = c.req.header('origin');
  if (origin && origin !== 'null') return origin;
  const referer = c.req.header('referer');
  if (!referer) return undefined;
  try {
    return new URL(referer).origin;
  } catch {
    return undefined;
  }
}

/**
 * Refuse a POST that did not come from this server's own pages: a wrong or missing Origin (403), then,
 * where a session signed the form, a missing or wrong CSRF secret (403). The parsed form is cached by hono,
 * so the handler reads it again for free.
 */
export function guardForms(): MiddlewareHandler<WebEnv> {
  return async (c, next) => {
    if (c.req.method === 'GET' || c.req.method === 'HEAD') return next();
    const origin = requestOrigin(c);
    if (origin !== serverOrigin(c)) {
      throw new HttpProblem(
        403,
        'cross-site-form',
        origin === undefined
          ? 'this form was sent without an Origin header, so the server cannot tell it came from its own page; nothing was changed'
          : `this form was sent from ${origin}, not from this server's pages; nothing was changed`,
      );
    }
    if (c.req.path === '/sign-in') return next(); // its own one-off secret, checked by the handler
    const session = c.get('session');
    const form = await c.req.parseBody();
    if (!session) throw new HttpProblem(401, 'sign-in-required', 'your session has ended (signed out, expired or token revoked): sign in again');
    if (!csrfMatches(session.csrf, form.csrf)) {
      throw new HttpProblem(403, 'csrf-mismatch', 'this form is out of date or did not come from this session: reload the page and try again');
    }
    return next();
  };
}

/** The signed-in session with at least `role`; else a refusal the error page words (401 to sign in, 403 too weak a role). */
export function requireSession(c: WebContext, role: TokenRole): WebSession {
  const session = c.get('session');
  if (!session) throw new HttpProblem(401, 'sign-in-required', `this page needs you to sign in with a token of role ${role} or above`);
  if (!roleAllows(session.principal.role, role)) {
    throw new HttpProblem(
      403,
      'role-too-weak',
      `you are signed in as ${session.principal.user} with role ${session.principal.role}; this needs ${role} or above`,
    );
  }
  return session;
}

/** Reading pages: allowed to anyone signed in, and to anonymous readers when the settings say so. */
export async function requireReader(ctx: PageContext, c: WebContext): Promise<void> {
  if (c.get('session') || (await ctx.anonymousReads())) return;
  throw new HttpProblem(401, 'sign-in-required', 'this server allows reading only to signed-in people (setting anonymous_reads): sign in');
}

/** A path on this server to go to after a form (never another site: no scheme, no //host, no backslash). */
export function localPath(path: unknown, fallback: string): string {
  return typeof path === 'string' && /^\/(?!\/)[^\s\\]*$/.test(path) ? path : fallback;
}
