/**
 * Bearer tokens for the HTTP API. A token is shown once, at creation; the registry keeps only its
 * SHA-256, so a leaked database file hands out no working credentials. Tokens carry a recognisable
 * prefix ("nkl_") so secret scanners and people can tell what a stray string is.
 */
import { randomBytes } from 'node:crypto';
import { eq, isNull } from 'drizzle-orm';
import { binaryOrder } from '../registry/sql.ts';
import { TOKEN_ROLES, type TokenRole } from '../registry/schema-auth.ts';
import type * as tableTypes from '../registry/schema-auth.ts';
import type { Registry } from '../registry/open.ts';
import { sha256Hex } from '../registry/canonical.ts';
import { activeToken, noteTokenUse } from '../registry/hot-reads.ts';
import { appendAudit, nowIso, writeTransaction } from '../registry/records.ts';
import { first } from '../registry/sql.ts';
import { InputError, NotFoundError, ConflictError } from '../errors.ts';
import { checkActor } from './actor.ts';
import { LIFETIME_FORM, lifetimeHours, readSettings } from './settings.ts';

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
  /** When it stops working (ISO 8601 UTC); null: never. */
  expires_at: string | null;
  /** True when `expires_at` has passed (at the time of listing). */
  expired: boolean;
  /** Last request that presented it, to within an hour (recorded at most once an hour); null: never used since recording began. */
  last_used_at: string | null;
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
  /** When the token stops working (ISO 8601 UTC), null: never. Checked on every request (`tokenExpired`). */
  expiresAt: string | null;
  /** The stored last use when the token was looked up (`recordTokenUse` keeps it coarse). */
  lastUsedAt: string | null;
}

export function parseRole(role: string): TokenRole {
  if ((TOKEN_ROLES as readonly string[]).includes(role)) return role as TokenRole;
  throw new InputError('token-role', `unknown role "${role}": expected one of ${TOKEN_ROLES.join(', ')}`);
}

/** True when `role` may do what `required` may (roles are ordered reader < editor < approver < admin). */
export function roleAllows(role: TokenRole, required: TokenRole): boolean {
  return TOKEN_ROLES.indexOf(role) >= TOKEN_ROLES.indexOf(required);
}

function toInfo(row: typeof tableTypes.apiTokens.$inferSelect, now = Date.now()): TokenInfo {
  return {
    id: row.id,
    user: row.user,
    role: row.role,
    created_at: row.createdAt,
    created_by: row.createdBy,
    revoked_at: row.revokedAt,
    revoked_by: row.revokedBy,
    expires_at: row.expiresAt,
    expired: row.expiresAt !== null && Date.parse(row.expiresAt) <= now,
    last_used_at: row.lastUsedAt,
  };
}

/** Refuse a lifetime that is not "90d", "12h" or "never" (rule token-lifetime, naming the option). */
export function parseTokenLifetime(text: string, option = 'expires'): number | null {
  const hours = lifetimeHours(text.trim());
  if (hours === undefined)
    throw new InputError('token-lifetime', `"${text}" is not a token lifetime: ${LIFETIME_FORM}`, { field: option }, { option, value: text });
  return hours;
}

/**
 * Create a token for `user` with `role`; the returned `token` is the only time the secret exists in clear. `expires`
 * is its lifetime ("90d", "12h", "never"); without it the `token_lifetime` setting applies.
 */
export async function createToken(
  registry: Registry,
  input: { user: string; role: string; createdBy: string; expires?: string },
): Promise<CreatedToken> {
  const { apiTokens } = registry.tables;
  const user = checkActor(input.user);
  const createdBy = checkActor(input.createdBy);
  const role = parseRole(input.role);
  const hours = parseTokenLifetime(input.expires ?? (await readSettings(registry)).token_lifetime);
  const token = TOKEN_PREFIX + randomBytes(32).toString('base64url');
  const createdMs = Date.now();
  const row = {
    id: `tok_${randomBytes(6).toString('hex')}`,
    user,
    role,
    tokenSha256: sha256Hex(token),
    createdAt: new Date(createdMs).toISOString(),
    createdBy,
    revokedAt: null,
    revokedBy: null,
    expiresAt: hours === null ? null : new Date(createdMs + hours * HOUR_MS).toISOString(),
    lastUsedAt: null,
  };
  await writeTransaction(registry, async () => {
    await registry.db.insert(apiTokens).values(row);
    await appendAudit(registry, { actor: createdBy, action: 'token.create', detail: { id: row.id, user, role, expires_at: row.expiresAt } });
  });
  return { token, ...toInfo(row) };
}

/** Every token, oldest first; revoked and expired ones included unless `activeOnly`. */
export async function listTokens(registry: Registry, options: { activeOnly?: boolean } = {}): Promise<TokenInfo[]> {
  const { apiTokens } = registry.tables;
  const rows = (await registry.db
    .select()
    .from(apiTokens)
    .where(options.activeOnly ? isNull(apiTokens.revokedAt) : undefined)
    .orderBy(apiTokens.createdAt, binaryOrder(registry, apiTokens.id))) as (typeof tableTypes.apiTokens.$inferSelect)[];
  const now = Date.now();
  const tokens = rows.map((row) => toInfo(row, now));
  return options.activeOnly ? tokens.filter((t) => !t.expired) : tokens;
}

/** Revoke a token by id. Revoking twice is refused (409) so a typo'd id is noticed. */
export async function revokeToken(registry: Registry, id: string, actor: string): Promise<TokenInfo> {
  const { apiTokens } = registry.tables;
  const revokedBy = checkActor(actor);
  const row = (await first(registry.db.select().from(apiTokens).where(eq(apiTokens.id, id)).limit(1))) as
    | typeof tableTypes.apiTokens.$inferSelect
    | undefined;
  if (!row) throw new NotFoundError(`no token with id "${id}"`, 'token-not-found');
  if (row.revokedAt) throw new ConflictError(`token ${id} was already revoked at ${row.revokedAt} by ${row.revokedBy}`, 'token-revoked');
  const revokedAt = nowIso();
  await writeTransaction(registry, async () => {
    await registry.db.update(apiTokens).set({ revokedAt, revokedBy }).where(eq(apiTokens.id, id));
    await appendAudit(registry, { actor: revokedBy, action: 'token.revoke', detail: { id, user: row.user } });
  });
  return toInfo({ ...row, revokedAt, revokedBy });
}

/**
 * Every API request authenticates, so the lookup is one plain prepared statement (registry/hot-reads.ts); the
 * server also remembers the answer until the registry changes (src/api/auth.ts).
 */

/**
 * The principal for a presented token, or undefined for an unknown or revoked token. An expired token still
 * has a principal, so the caller can say it expired: check `tokenExpired` before trusting it.
 */
export async function authenticateToken(registry: Registry, token: string): Promise<Principal | undefined> {
  if (!token.startsWith(TOKEN_PREFIX)) return undefined;
  return activeToken(registry, sha256Hex(token));
}

const HOUR_MS = 3_600_000;

/** True when the principal's token has passed its expiry at `now` (ms since the epoch). */
export function tokenExpired(principal: Principal, now = Date.now()): boolean {
  return principal.expiresAt !== null && Date.parse(principal.expiresAt) <= now;
}

/**
 * Last use is kept coarse, so authenticating stays a read: at most one write per token per RECORD_USE_EVERY_MS, never on
 * a read-only registry, and never waiting for the write lock (a busy registry skips the note; the next hour writes it).
 */
export const RECORD_USE_EVERY_MS = HOUR_MS;
const lastRecorded = new WeakMap<Registry, Map<string, number>>();

/** Note that `principal`'s token was used now, unless that was already noted within the hour. Never throws. */
export async function recordTokenUse(registry: Registry, principal: Principal, now = Date.now()): Promise<void> {
  if (registry.readonly) return;
  let seen = lastRecorded.get(registry);
  if (!seen) lastRecorded.set(registry, (seen = new Map()));
  const stored = principal.lastUsedAt === null ? Number.NEGATIVE_INFINITY : Date.parse(principal.lastUsedAt);
  const last = Math.max(seen.get(principal.tokenId) ?? Number.NEGATIVE_INFINITY, stored);
  if (now - last < RECORD_USE_EVERY_MS) return;
  if (seen.size > 10_000) seen.clear();
  seen.set(principal.tokenId, now);
  await noteTokenUse(registry, principal.tokenId, new Date(now).toISOString());
}
