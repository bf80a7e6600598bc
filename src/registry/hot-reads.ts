/**
 * On PostgreSQL each goes to its twin in hot-reads-pg.ts (loaded only then).
 * Plain prepared statements on the better-sqlite3 handle for the API's hot read paths, where drizzle's result
 * mapping doubled the cost (9 µs → 22 µs measured for the status lookup). One statement per registry, prepared
 * on first use. Everything else reads through drizzle. Asynchronous like every registry read (the statements
 * themselves run at once), so another backend can answer them its own way.
 */
import type { Statement } from 'better-sqlite3';
import type { Registry } from './open.ts';
import type { TokenRole } from './schema-auth.ts';
import type { VersionStatus } from './types.ts';

function preparedPer<S>(make: (registry: Registry) => S): (registry: Registry) => S {
  const statements = new WeakMap<Registry, S>();
  return (registry) => {
    let statement = statements.get(registry);
    if (!statement) statements.set(registry, (statement = make(registry)));
    return statement;
  };
}

/**
 * Only `status` is read: it precedes the large `content` column in the row, so SQLite never walks the
 * content's overflow pages (reading `sha256`, stored after it, would).
 */
const statusOf = preparedPer(
  (registry): Statement<[string, number], { status: VersionStatus }> =>
    registry.sqlite.prepare('SELECT status FROM material_versions WHERE material_id = (SELECT id FROM materials WHERE slug = ?) AND number = ?'),
);

/** Status of slug@number, or undefined when there is no such version. */
export async function versionStatus(registry: Registry, slug: string, number: number): Promise<VersionStatus | undefined> {
  if (registry.pg) return (await import('./hot-reads-pg.ts')).pgVersionStatus(registry.pg, slug, number);
  return statusOf(registry).get(slug, number)?.status;
}

/** An unrevoked token as authentication needs it (expiry is checked by the caller, so it can say the token expired). */
export interface ActiveToken {
  tokenId: string;
  user: string;
  role: TokenRole;
  expiresAt: string | null;
  lastUsedAt: string | null;
}

const tokenBy = preparedPer(
  (registry): Statement<[string], ActiveToken> =>
    registry.sqlite.prepare(
      'SELECT id AS tokenId, user, role, expires_at AS expiresAt, last_used_at AS lastUsedAt FROM api_tokens WHERE token_sha256 = ? AND revoked_at IS NULL',
    ),
);

/** The unrevoked token whose secret hashes to `sha256`, or undefined. */
export async function activeToken(registry: Registry, sha256: string): Promise<ActiveToken | undefined> {
  if (registry.pg) return (await import('./hot-reads-pg.ts')).pgActiveToken(registry.pg, sha256);
  return tokenBy(registry).get(sha256);
}

/**
 * Write a token's last use without waiting for the write lock: busy_timeout is 0 for this one statement, so a
 * registry busy with another writer skips the note instead of stalling the server's event loop. Never throws:
 * last use is a convenience, never a reason to refuse a request.
 */
export async function noteTokenUse(registry: Registry, tokenId: string, at: string): Promise<void> {
  if (registry.pg) {
    await (await import('./hot-reads-pg.ts')).pgNoteTokenUse(registry.pg, tokenId, at);
    return;
  }
  const busyTimeout = registry.sqlite.pragma('busy_timeout', { simple: true }) as number;
  try {
    registry.sqlite.pragma('busy_timeout = 0');
    registry.sqlite.prepare('UPDATE api_tokens SET last_used_at = ? WHERE id = ?').run(at, tokenId);
  } catch {
    // busy, full or read-only: skipped
  } finally {
    registry.sqlite.pragma(`busy_timeout = ${busyTimeout}`);
  }
}

/**
 * Two counters that move when the registry changes: `own()`, commits on this connection (`SELECT
 * total_changes()`, no lock, about 0.1 µs); `other()`, commits by any other connection (`PRAGMA data_version`,
 * https://sqlite.org/pragma.html#pragma_data_version; a read transaction, about 5 µs under WAL).
 * Synchronous on purpose: it runs on every cached request (src/api/registry-changes.ts). On PostgreSQL, the
 * counters of postgres-changes.ts (a LISTEN connection), made once per registry handle and closed with it.
 */
export function changeCounters(registry: Registry): { own: () => number; other: () => number } {
  if (registry.pg) {
    const make = pgCounters.get(registry);
    if (!make) throw new Error('changeCounters: the PostgreSQL registry was not opened through openRegistry');
    return make();
  }
  const own = registry.sqlite.prepare<[], number>('SELECT total_changes()').pluck();
  const other = registry.sqlite.prepare<[], number>('PRAGMA data_version').pluck();
  return { own: () => own.get() as number, other: () => other.get() as number };
}

/** How to make a PostgreSQL registry's change counters, set by open.ts (which loaded postgres-changes.ts). */
const pgCounters = new WeakMap<Registry, () => { own: () => number; other: () => number }>();

export function setPgCounters(registry: Registry, make: () => { own: () => number; other: () => number }): void {
  pgCounters.set(registry, make);
}
