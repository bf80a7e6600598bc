/**
 * Access tokens for the HTTP API. Kept apart from the record schema (schema.ts) so the API's tables have
 * their own migration; drizzle-kit picks both up through the glob "./src/registry/schema*.ts". Settings,
 * the API's included, live in one table: `registry_settings` in schema.ts.
 */
import { blob, sqliteTable, text } from 'drizzle-orm/sqlite-core';

/** Roles in increasing power; each role may do everything the roles before it may. */
export const TOKEN_ROLES = ['reader', 'editor', 'approver', 'admin'] as const;
export type TokenRole = (typeof TOKEN_ROLES)[number];

/**
 * One bearer token. Only the SHA-256 of the secret is stored: a copied database hands out no
 * working tokens. `revokedAt` set, or `expiresAt` past, means the token is refused; the row stays for the audit trail.
 */
export const apiTokens = sqliteTable('api_tokens', {
  id: text('id').primaryKey(),
  user: text('user').notNull(),
  role: text('role', { enum: TOKEN_ROLES }).notNull(),
  /** Lower-case hex SHA-256 of the full token string. */
  tokenSha256: text('token_sha256').notNull().unique(),
  /** ISO 8601 UTC. */
  createdAt: text('created_at').notNull(),
  createdBy: text('created_by').notNull(),
  revokedAt: text('revoked_at'),
  revokedBy: text('revoked_by'),
  /** ISO 8601 UTC after which the token is refused (401 auth-token-expired); null: it never expires (tokens made before expiry existed). */
  expiresAt: text('expires_at'),
  /** ISO 8601 UTC of the last request that presented it, written at most once an hour per token (src/service/tokens.ts). */
  lastUsedAt: text('last_used_at'),
});

/**
 * A browser session of the web pages (src/web): made when a person pastes a token once, so several
 * servers on one registry share it. Only the SHA-256 of the cookie's secret is stored. The session ends
 * at `expiresAt`, on sign-out (row deleted) and when its token is revoked (the lookup joins api_tokens).
 * `csrf` is the per-session secret every state-changing form must carry.
 */
export const webSessions = sqliteTable('web_sessions', {
  idSha256: text('id_sha256').primaryKey(),
  tokenId: text('token_id')
    .notNull()
    .references(() => apiTokens.id),
  csrf: text('csrf').notNull(),
  createdAt: text('created_at').notNull(),
  expiresAt: text('expires_at').notNull(),
});

/**
 * An uploaded table waiting for its preview to be confirmed (web pages): visible only to its session,
 * removed when stored, discarded, or an hour old.
 */
export const webPendingUploads = sqliteTable('web_pending_uploads', {
  id: text('id').primaryKey(),
  sessionSha256: text('session_sha256')
    .notNull()
    .references(() => webSessions.idSha256, { onDelete: 'cascade' }),
  slug: text('slug').notNull(),
  fileName: text('file_name').notNull(),
  bytes: blob('bytes', { mode: 'buffer' }).notNull(),
  /** ImportOptions as JSON (unit, columns … as chosen in the form). */
  importOptions: text('import_options').notNull(),
  createdAt: text('created_at').notNull(),
});
