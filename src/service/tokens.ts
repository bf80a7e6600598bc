/**
 * Bearer tokens for the HTTP API. A token is shown once, at creation; the registry keeps only its
 * SHA-256, so a leaked database file hands out no working credentials. Tokens carry a recognisable
 * prefix ("nkl_") so secret scanners and people can tell what a stray string is.
 */
import { randomBytes } from 'node:crypto';
import { eq, isNull } from 'drizzle-orm';
import { apiTokens, TOKEN_ROLES, type TokenRole } from '../registry/schema-auth.ts';
import type { Registry } from '../registry/open.ts';
import { sha256Hex } from '../registry/canonical.ts';
import { activeToken } from '../registry/hot-reads.ts';
import { appendAudit, nowIso, writeTransaction } from '../registry/records.ts';
import { InputError, NotFoundError, ConflictError } from '../errors.ts';
import { checkActor } from './actor.ts';

export const TOKEN_PREFIX = 'nkl_';

/** A token as listed: never the secret, never its hash. */
export interface TokenInfo {
  id: string;
  user: string;
  role: TokenRole;
  created_at: string;
  created_by: string;
  revoked_at: string | null;
  revoked_by: string | null;
}

/** What `createToken` returns: the secret, once, plus the listed fields. */
export interface CreatedToken extends TokenInfo {
  token: string;
}

/** The identity an accepted token stands for. */
export interface Principal {
  tokenId: string;
  user: string;
  role: TokenRole;
}

export function parseRole(role: string): TokenRole {
  if ((TOKEN_ROLES as readonly string[]).includes(role)) return role as TokenRole;
  throw new InputError('token-role', `unknown role "${role}": expected one of ${TOKEN_ROLES.join(', ')}`);
}

/** True when `role` may do what `required` may (roles are ordered reader < editor < approver < admin). */
export function roleAllows(role: TokenRole, required: TokenRole): boolean {
  return TOKEN_ROLES.indexOf(role) >= TOKEN_ROLES.indexOf(required);
}

function toInfo(row: typeof apiTokens.$inferSelect): TokenInfo {
  return {
    id: row.id,
    user: row.user,
    role: row.role,
    created_at: row.createdAt,
    created_by: row.createdBy,
    revoked_at: row.revokedAt,
    revoked_by: row.revokedBy,
  };
}

/** Create a token for `user` with `role`; the returned `token` is the only time the secret exists in clear. */
export function createToken(registry: Registry, input: { user: string; role: string; createdBy: string }): CreatedToken {
  const user = checkActor(input.user);
  const createdBy = checkActor(input.createdBy);
  const role = parseRole(input.role);
  const token = TOKEN_PREFIX + randomBytes(32).toString('base64url');
  const row = {
    id: `tok_${randomBytes(6).toString('hex')}`,
    user,
    role,
    tokenSha256: sha256Hex(token),
    createdAt: nowIso(),
    createdBy,
    revokedAt: null,
    revokedBy: null,
  };
  writeTransaction(registry, () => {
    registry.db.insert(apiTokens).values(row).run();
    appendAudit(registry, { actor: createdBy, action: 'token.create', detail: { id: row.id, user, role } });
  });
  return { token, ...toInfo(row) };
}

/** Every token, oldest first; revoked ones included (with revoked_at) unless `activeOnly`. */
export function listTokens(registry: Registry, options: { activeOnly?: boolean } = {}): TokenInfo[] {
  const rows = registry.db
    .select()
    .from(apiTokens)
    .where(options.activeOnly ? isNull(apiTokens.revokedAt) : undefined)
    .orderBy(apiTokens.createdAt, apiTokens.id)
    .all() as (typeof apiTokens.$inferSelect)[];
  return rows.map(toInfo);
}

/** Revoke a token by id. Revoking twice is refused (409) so a typo'd id is noticed. */
export function revokeToken(registry: Registry, id: string, actor: string): TokenInfo {
  const revokedBy = checkActor(actor);
  const row = registry.db.select().from(apiTokens).where(eq(apiTokens.id, id)).get() as typeof apiTokens.$inferSelect | undefined;
  if (!row) throw new NotFoundError(`no token with id "${id}" (see \`nkledger token list\`)`, 'token-not-found');
  if (row.revokedAt) throw new ConflictError(`token ${id} was already revoked at ${row.revokedAt} by ${row.revokedBy}`, 'token-revoked');
  const revokedAt = nowIso();
  writeTransaction(registry, () => {
    registry.db.update(apiTokens).set({ revokedAt, revokedBy }).where(eq(apiTokens.id, id)).run();
    appendAudit(registry, { actor: revokedBy, action: 'token.revoke', detail: { id, user: row.user } });
  });
  return toInfo({ ...row, revokedAt, revokedBy });
}

/**
 * Every API request authenticates, so the lookup is one plain prepared statement (registry/hot-reads.ts); the
 * server also remembers the answer until the registry changes (src/api/auth.ts).
 */
export function authenticateToken(registry: Registry, token: string): Principal | undefined {
  if (!token.startsWith(TOKEN_PREFIX)) return undefined;
  return activeToken(registry, sha256Hex(token));
}
