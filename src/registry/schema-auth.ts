/**
 * Access tokens for the HTTP API. Kept apart from the record schema (schema.ts) so the API's tables have
 * their own migration; drizzle-kit picks both up through the glob "./src/registry/schema*.ts". Settings,
 * the API's included, live in one table: `registry_settings` in schema.ts.
 */
import { sqliteTable, text } from 'drizzle-orm/sqlite-core';

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
