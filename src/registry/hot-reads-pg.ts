/**
 * The API's hot reads on the PostgreSQL registry, twins of hot-reads.ts: plain SQL as named prepared statements
 * (node-postgres parses and plans each once per connection, then sends only the values), no drizzle result
 * mapping. The reads go through `handle.db`'s connection: the pool's, or the transaction's inside one.
 *
 * `pgActiveToken` is meant to be asked on every request, not remembered across requests: see
 * postgres-changes.ts for why a revocation by another server must not wait for a change notice.
 */
import type { PoolClient, QueryConfig } from 'pg';
import type { ActiveToken } from './hot-reads.ts';
import type { PgRegistry } from './postgres.ts';
import { checkout, inPgTransaction } from './postgres.ts';
import type { VersionStatus } from './types.ts';

interface Queryable {
  query<R extends object>(config: QueryConfig): Promise<{ rows: R[]; rowCount: number | null }>;
}

/** The connection `handle.db` uses now: the transaction's client inside one, else the pool. */
function connectionOf(handle: PgRegistry): Queryable {
  return (handle.db as unknown as { $client: Queryable }).$client;
}

const STATUS = 'SELECT status FROM material_versions WHERE material_id = (SELECT id FROM materials WHERE slug = $1) AND number = $2';

/** Status of slug@number, or undefined when there is no such version. */
export async function pgVersionStatus(handle: PgRegistry, slug: string, number: number): Promise<VersionStatus | undefined> {
  const { rows } = await connectionOf(handle).query<{ status: VersionStatus }>({ name: 'nk_version_status', text: STATUS, values: [slug, number] });
  return rows[0]?.status;
}

// "user" is a reserved word in PostgreSQL: quoted.
const TOKEN =
  'SELECT id AS "tokenId", "user", role, expires_at AS "expiresAt", last_used_at AS "lastUsedAt" FROM api_tokens WHERE token_sha256 = $1 AND revoked_at IS NULL';

/** The unrevoked token whose secret hashes to `sha256`, or undefined (expiry is the caller's to check). */
export async function pgActiveToken(handle: PgRegistry, sha256: string): Promise<ActiveToken | undefined> {
  const { rows } = await connectionOf(handle).query<ActiveToken>({ name: 'nk_active_token', text: TOKEN, values: [sha256] });
  return rows[0];
}

/**
 * Write a token's last use without ever waiting long: not for the write lock (this one-row update does not take
 * it: no number or chain depends on last use), not for the row (SKIP LOCKED: a writer revoking the token holds it
 * until its commit, and the note is then skipped), not for a connection (skipped when the pool has none idle and
 * no room for another), and not past `timeoutMs` for anything else (lock_timeout and statement_timeout of its own
 * short transaction). Resolves to whether the note was written. Never throws: last use is a convenience, never a
 * reason to refuse a request. At most one per token per hour (service/tokens.ts), so its four round trips cost
 * nothing that matters.
 */
export async function pgNoteTokenUse(handle: PgRegistry, tokenId: string, at: string, timeoutMs = 1000): Promise<boolean> {
  // Inside a transaction of the handle it would write as part of it; it belongs between requests' work.
  if (inPgTransaction(handle)) return false;
  const pool = handle.pool;
  if (pool.idleCount === 0 && pool.totalCount >= (pool.options.max ?? 10)) return false;
  let client: PoolClient;
  let release: (broken?: boolean) => void;
  try {
    ({ client, release } = await checkout(pool));
  } catch {
    return false; // unreachable: skipped
  }
  let broken = false;
  try {
    const ms = Math.max(1, Math.round(timeoutMs));
    await client.query('BEGIN');
    await client.query(`SET LOCAL lock_timeout = ${ms}`);
    await client.query(`SET LOCAL statement_timeout = ${ms}`);
    const { rowCount } = await client.query({
      name: 'nk_note_token_use',
      text: 'UPDATE api_tokens SET last_used_at = $2 WHERE id = (SELECT id FROM api_tokens WHERE id = $1 FOR UPDATE SKIP LOCKED)',
      values: [tokenId, at],
    });
    await client.query('COMMIT');
    return (rowCount ?? 0) > 0;
  } catch {
    // busy, full, read-only, timed out: skipped
    await client.query('ROLLBACK').catch(() => {
      broken = true;
    });
    return false;
  } finally {
    release(broken);
  }
}
