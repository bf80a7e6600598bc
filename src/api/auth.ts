/**
 * Bearer-token authentication and role checks. `authenticate` resolves the Authorization header to
 * a principal (or none) before any handler runs, refuses an expired token and notes its use (coarsely); `requireRole` guards one route. Both refuse with
 * a problem document and run before the handler, so a refused request never reaches a write.
 */
import type { MiddlewareHandler } from 'hono';
import { authenticateToken, recordTokenUse, roleAllows, tokenExpired, type Principal } from '../service/tokens.ts';
import type { Registry } from '../registry/open.ts';
import type { TokenRole } from '../registry/schema-auth.ts';
import { HttpProblem } from './problem.ts';
import { ChangeMemo, type RegistryChanges } from './registry-changes.ts';

export interface ApiEnv {
  Variables: { principal: Principal | null };
}

const CHALLENGE = 'Bearer realm="nkledger"';

/**
 * Who each presented token stands for is remembered until the registry changes (a revocation is a
 * change), so a design tool polling n,k does not pay a hash and an SQLite lookup per request. The
 * memo is keyed by the token as presented; it lives only in this process's memory, like the request.
 * On PostgreSQL there is no memo: several servers share the database, and a token revoked through one must
 * be refused by every other on its next request, which a change notice arriving a moment later cannot promise
 * (src/registry/postgres-changes.ts); the lookup is one indexed read.
 */
export function authenticate(registry: Registry, changes: RegistryChanges): MiddlewareHandler<ApiEnv> {
  const principals = new ChangeMemo<Principal | undefined>(changes);
  return async (c, next) => {
    const header = c.req.header('authorization');
    if (header === undefined) {
      c.set('principal', null);
      return next();
    }
    const match = /^Bearer\s+(\S+)\s*$/i.exec(header);
    if (!match) {
      throw new HttpProblem(401, 'auth-malformed', 'the Authorization header must be "Bearer <token>"', {
        'www-authenticate': `${CHALLENGE}, error="invalid_request"`,
      });
    }
    const token = match[1];
    const principal = changes.memoizeTokens
      ? await principals.get(token, () => authenticateToken(registry, token))
      : await authenticateToken(registry, token);
    if (!principal) {
      throw new HttpProblem(401, 'auth-invalid-token', 'the bearer token is unknown or has been revoked', {
        'www-authenticate': `${CHALLENGE}, error="invalid_token"`,
      });
    }
    if (tokenExpired(principal)) {
      throw new HttpProblem(
        401,
        'auth-token-expired',
        `token ${principal.tokenId} (${principal.user}) expired at ${principal.expiresAt}; an admin makes a new one with \`nkledger token create --user ${principal.user} --role ${principal.role}\``,
        { 'www-authenticate': `${CHALLENGE}, error="invalid_token", error_description="the token has expired"` },
      );
    }
    await recordTokenUse(registry, principal);
    c.set('principal', principal);
    return next();
  };
}

/**
 * Allow the route for principals whose role is at least `role` (reader < editor < approver < admin).
 * Without a token, only reads pass, and only while `anonymousReads()` says so.
 */
export function requireRole(role: TokenRole, anonymousReads: () => Promise<boolean>): MiddlewareHandler<ApiEnv> {
  return async (c, next) => {
    const principal = c.get('principal');
    if (!principal) {
      if (role === 'reader' && (await anonymousReads())) return next();
      throw new HttpProblem(
        401,
        'auth-required',
        `this request needs a bearer token with role ${role} or above (an admin makes one with \`nkledger token create --user NAME --role ${role}\`)`,
        {
          'www-authenticate': CHALLENGE,
        },
      );
    }
    if (!roleAllows(principal.role, role)) {
      throw new HttpProblem(
        403,
        'auth-forbidden',
        `token ${principal.tokenId} (${principal.user}) has role ${principal.role}; this request needs ${role} or above`,
      );
    }
    return next();
  };
}

/** Who is acting, for the audit trail of a write: the token's user. */
export function actorOf(principal: Principal | null): string {
  if (!principal) throw new HttpProblem(401, 'auth-required', 'this request needs a bearer token');
  return principal.user;
}
