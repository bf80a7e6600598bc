/**
 * The lifecycle status of `slug@N` from one prepared statement, for hot read paths (the API's cache of
 * rendered answers) that must learn cheaply whether a version is still approved or has been retired
 * since. Only `status` is read: it precedes the large `content` column in the row, so SQLite never
 * walks the content's overflow pages (reading `sha256`, stored after it, would). The hash of slug@N
 * needs no re-check: content and numbers are immutable (drizzle/0001_immutability.sql).
 * Full resolution with messages stays in resolveRow (versions.ts).
 *
 * Plain SQL on the better-sqlite3 handle rather than a drizzle prepared query: the API asks it for
 * cached n,k answers (remembered until the registry changes, src/api/registry-changes.ts) and
 * drizzle's result mapping doubled its cost (9 µs → 22 µs measured).
 */
import type { Statement } from 'better-sqlite3';
import type { Registry } from '../registry/open.ts';
import type { VersionStatus } from '../registry/types.ts';

const STATUS_SQL = 'SELECT status FROM material_versions WHERE material_id = (SELECT id FROM materials WHERE slug = ?) AND number = ?';

const prepared = new WeakMap<Registry, Statement<[string, number], { status: VersionStatus }>>();

/** Status of slug@number, or undefined when there is no such version. */
export function versionStatus(registry: Registry, slug: string, number: number): VersionStatus | undefined {
  let statement = prepared.get(registry);
  if (!statement) prepared.set(registry, (statement = registry.sqlite.prepare(STATUS_SQL)));
  return statement.get(slug, number)?.status;
}
