/**
 * Browser sessions of the web pages and the uploads they hold for preview. A session is made by
 * presenting an API token once (src/service/tokens.ts decides who it stands for); the browser then
 * carries only a random session secret in a cookie. The registry keeps the secret's SHA-256, so sessions
 * are shared by every server on one registry file and a copied database hands out no working cookie.
 * A session ends at its expiry, on sign-out, or as soon as its token is revoked or expires (every lookup
 * joins api_tokens). Each session has its own CSRF secret that state-changing forms must echo.
 */
import { randomBytes, timingSafeEqual } from 'node:crypto';
import { and, asc, eq, gt, isNull, lt, or } from 'drizzle-orm';
import { InputError, NotFoundError } from '../errors.ts';
import type { ImportOptions } from '../io/parse-table.ts';
import { sha256Hex } from '../registry/canonical.ts';
import type { Registry } from '../registry/open.ts';
import { nowIso, writeTransaction } from '../registry/records.ts';
import { authenticateToken, recordTokenUse, tokenExpired, type Principal } from './tokens.ts';

/** How long a session lasts from sign-in: a working day and a bit, then the token is pasted again. */
export const SESSION_HOURS = 12;
/** How long an uploaded table waits for its preview to be confirmed. */
export const PENDING_UPLOAD_MINUTES = 60;
/** Most uploads one session may hold for preview at once (the oldest goes first). */
export const PENDING_UPLOADS_PER_SESSION = 4;

export interface WebSession {
  principal: Principal;
  /** The per-session secret forms echo (hidden field `csrf`). */
  csrf: string;
  /** SHA-256 of the cookie secret: the session's key in the registry. */
  key: string;
  expiresAt: string;
}

/** Sign in: `token` must be a live API token. Returns the cookie secret (shown to the browser only) and the session. */
export async function startSession(registry: Registry, token: string): Promise<{ secret: string; session: WebSession }> {
  const { webSessions } = registry.tables;
  const principal = await authenticateToken(registry, token.trim());
  if (!principal) {
    throw new InputError(
      'sign-in-token',
      'that token is unknown or has been revoked: paste the whole token (it starts with nkl_)',
      {},
      {
        option: 'token',
      },
    );
  }
  if (tokenExpired(principal)) {
    throw new InputError(
      'auth-token-expired',
      `that token expired at ${principal.expiresAt}: ask an administrator for a new one`,
      {},
      {
        option: 'token',
      },
    );
  }
  const secret = randomBytes(32).toString('base64url');
  const key = sha256Hex(secret);
  const csrf = randomBytes(24).toString('base64url');
  const now = new Date();
  // A session never outlives its token.
  const sessionEnd = new Date(now.getTime() + SESSION_HOURS * 3600_000).toISOString();
  const expiresAt = principal.expiresAt !== null && principal.expiresAt < sessionEnd ? principal.expiresAt : sessionEnd;
  await writeTransaction(registry, async () => {
    // Expired sessions are removed here, so the table holds only live ones (and their pending uploads go with them).
    await registry.db.delete(webSessions).where(lt(webSessions.expiresAt, now.toISOString()));
    await registry.db.insert(webSessions).values({ idSha256: key, tokenId: principal.tokenId, csrf, createdAt: now.toISOString(), expiresAt });
  });
  return { secret, session: { principal, csrf, key, expiresAt } };
}

/** The live session a cookie secret stands for, or undefined (unknown, expired, signed out, token revoked or expired). */
export async function findSession(registry: Registry, secret: string): Promise<WebSession | undefined> {
  const { apiTokens, webSessions } = registry.tables;
  if (!/^[A-Za-z0-9_-]{43}$/.test(secret)) return undefined;
  const now = nowIso();
  const [row] = await registry.db
    .select({
      key: webSessions.idSha256,
      csrf: webSessions.csrf,
      expiresAt: webSessions.expiresAt,
      tokenId: apiTokens.id,
      user: apiTokens.user,
      role: apiTokens.role,
      tokenExpiresAt: apiTokens.expiresAt,
      lastUsedAt: apiTokens.lastUsedAt,
    })
    .from(webSessions)
    .innerJoin(apiTokens, eq(apiTokens.id, webSessions.tokenId))
    .where(
      and(
        eq(webSessions.idSha256, sha256Hex(secret)),
        isNull(apiTokens.revokedAt),
        gt(webSessions.expiresAt, now),
        or(isNull(apiTokens.expiresAt), gt(apiTokens.expiresAt, now)),
      ),
    )
    .limit(1);
  if (!row) return undefined;
  const principal: Principal = { tokenId: row.tokenId, user: row.user, role: row.role, expiresAt: row.tokenExpiresAt, lastUsedAt: row.lastUsedAt };
  // A page request is a use of the token, recorded as coarsely as the API records it.
  await recordTokenUse(registry, principal);
  return { key: row.key, csrf: row.csrf, expiresAt: row.expiresAt, principal };
}

/** Sign out: the session row goes (and the uploads it held). */
export async function endSession(registry: Registry, session: WebSession): Promise<void> {
  const { webSessions } = registry.tables;
  await writeTransaction(registry, async () => {
    await registry.db.delete(webSessions).where(eq(webSessions.idSha256, session.key));
  });
}

/** True when `presented` equals the session's CSRF secret (compared in constant time). */
export function csrfMatches(expected: string, presented: unknown): boolean {
  if (typeof presented !== 'string') return false;
  const a = Buffer.from(expected);
  const b = Buffer.from(presented);
  return a.length === b.length && timingSafeEqual(a, b);
}

export interface PendingUpload {
  id: string;
  slug: string;
  fileName: string;
  bytes: Uint8Array;
  importOptions: ImportOptions;
  createdAt: string;
}

const cutoff = () => new Date(Date.now() - PENDING_UPLOAD_MINUTES * 60_000).toISOString();

/** Keep an uploaded table for its session until it is stored or discarded (or an hour passes). */
export async function putPendingUpload(
  registry: Registry,
  session: WebSession,
  upload: { slug: string; fileName: string; bytes: Uint8Array; importOptions: ImportOptions },
): Promise<PendingUpload> {
  const { webPendingUploads } = registry.tables;
  const id = randomBytes(12).toString('base64url');
  const createdAt = nowIso();
  await writeTransaction(registry, async () => {
    await registry.db.delete(webPendingUploads).where(lt(webPendingUploads.createdAt, cutoff()));
    const held = await registry.db
      .select({ id: webPendingUploads.id })
      .from(webPendingUploads)
      .where(eq(webPendingUploads.sessionSha256, session.key))
      .orderBy(asc(webPendingUploads.createdAt));
    for (const old of held.slice(0, Math.max(0, held.length - PENDING_UPLOADS_PER_SESSION + 1))) {
      await registry.db.delete(webPendingUploads).where(eq(webPendingUploads.id, old.id));
    }
    await registry.db.insert(webPendingUploads).values({
      id,
      sessionSha256: session.key,
      slug: upload.slug,
      fileName: upload.fileName,
      bytes: Buffer.from(upload.bytes),
      importOptions: JSON.stringify(upload.importOptions),
      createdAt,
    });
  });
  return { id, createdAt, ...upload };
}

/** A pending upload of this session; another session's, an expired or an unknown one is "not found". */
export async function getPendingUpload(registry: Registry, session: WebSession, id: string): Promise<PendingUpload> {
  const { webPendingUploads } = registry.tables;
  const [row] = await registry.db
    .select()
    .from(webPendingUploads)
    .where(and(eq(webPendingUploads.id, id), eq(webPendingUploads.sessionSha256, session.key)))
    .limit(1);
  if (!row || row.createdAt < cutoff()) {
    throw new NotFoundError(
      `no pending upload "${id}" in this session (uploads wait ${PENDING_UPLOAD_MINUTES} minutes for a decision)`,
      'upload-not-pending',
    );
  }
  return {
    id: row.id,
    slug: row.slug,
    fileName: row.fileName,
    bytes: new Uint8Array(row.bytes),
    importOptions: JSON.parse(row.importOptions) as ImportOptions,
    createdAt: row.createdAt,
  };
}

/** Forget a pending upload of this session (after storing it, or when the person discards it). */
export async function dropPendingUpload(registry: Registry, session: WebSession, id: string): Promise<void> {
  const { webPendingUploads } = registry.tables;
  await writeTransaction(registry, async () => {
    await registry.db.delete(webPendingUploads).where(and(eq(webPendingUploads.id, id), eq(webPendingUploads.sessionSha256, session.key)));
  });
}
