/**
 * Bearer tokens for the HTTP API. A token is shown once, at creation; the registry keeps only its
 * SHA-256, so a leaked database file hands out no working credentials. Tokens carry a recognisable
 * prefix ("nkl_") so secret scanners and people can tell what a stray string is.
 */
import { createHash, randomBytes } from 'node:crypto';
import { and, eq, isNull } from 'drizzle-orm';
import type { BaseSQLiteDatabase } from 'drizzle-orm/sqlite-core';
import { apiTokens, TOKEN_ROLES, type TokenRole } from '../registry/schema-auth.ts';
import { InputError, NotFoundError, ConflictError } from '../errors.ts';

/** Anything with a drizzle SQLite handle: the Registry satisfies it. */
export interface AuthStore {
  // eslint-disable-next-line @typescript-eslint/no-explicit-any
  db: BaseSQLiteDatabase<'sync', any, any>;
}

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

export function sha256Hex(text: string): string {
  return createHash('sha256').update(text).digest('hex');
}

export function parseRole(role: string): TokenRole {
  if ((TOKEN_ROLES as readonly string[]).includes(role)) return role as TokenRole;
  throw new InputError('token-role', `unknown role "${role}": expected one of ${TOKEN_ROLES.join(', ')}`);
}

/** True when `role` may do what `required` may (roles are ordered reader < editor < approver < admin). */
export function roleAllows(role: TokenRole, required: TokenRole): boolean {
  return TOKEN_ROLES.indexOf(role) >= TOKEN_ROLES.indexOf(required);
}

const USER_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._@-]{0,63}$/;

function checkUser(user: string, what: string): string {
  if (!USER_PATTERN.test(user)) {
    throw new InputError('token-user', `${what} "${user}" is not a user name: 1-64 letters, digits, ".", "_", "@", "-"`);
  }
  return user;
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
export function createToken(store: AuthStore, input: { user: string; role: string; createdBy: string }): CreatedToken {
  const user = checkUser(input.user, 'user');
  const role = parseRole(input.role);
  const token = TOKEN_PREFIX + randomBytes(32).toString('base64url');
  const row = {
    id: `tok_${randomBytes(6).toString('hex')}`,
    user,
    role,
    tokenSha256: sha256Hex(token),
    createdAt: new Date().toISOString(),
    createdBy: input.createdBy,
    revokedAt: null,
    revokedBy: null,
  };
  store.db.insert(apiTokens).values(row).run();
  return { token, ...toInfo(row) };
}

/** Every token, oldest first; revoked ones included (with revoked_at) unless `activeOnly`. */
export function listTokens(store: AuthStore, options: { activeOnly?: boolean } = {}): TokenInfo[] {
  const rows = store.db
    .select()
    .from(apiTokens)
    .where(options.activeOnly ? isNull(apiTokens.revokedAt) : undefined)
    .orderBy(apiTokens.createdAt, apiTokens.id)
    .all() as (typeof apiTokens.$inferSelect)[];
  return rows.map(toInfo);
}

/** Revoke a token by id. Revoking twice is refused (409) so a typo'd id is noticed. */
export function revokeToken(store: AuthStore, id: string, revokedBy: string): TokenInfo {
  const row = store.db.select().from(apiTokens).where(eq(apiTokens.id, id)).get() as
    | typeof apiTokens.$inferSelect
    | undefined;
  if (!row) throw new NotFoundError(`no token with id "${id}" (see \`nkledger token list\`)`, 'token-not-found');
  if (row.revokedAt) throw new ConflictError(`token ${id} was already revoked at ${row.revokedAt} by ${row.revokedBy}`, 'token-revoked');
  const revokedAt = new Date().toISOString();
  store.db.update(apiTokens).set({ revokedAt, revokedBy }).where(eq(apiTokens.id, id)).run();
  return toInfo({ ...row, revokedAt, revokedBy });
}

/** The principal for a presented token, or undefined for an unknown or revoked token. */
export function authenticateToken(store: AuthStore, token: string): Principal | undefined {
  if (!token.startsWith(TOKEN_PREFIX)) return undefined;
  const row = store.db
    .select()
    .from(apiTokens)
    .where(and(eq(apiTokens.tokenSha256, sha256Hex(token)), isNull(apiTokens.revokedAt)))
    .get() as typeof apiTokens.$inferSelect | undefined;
  return row ? { tokenId: row.id, user: row.user, role: row.role } : undefined;
}
