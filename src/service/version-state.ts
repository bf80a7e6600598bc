/**
 * The lifecycle status of `slug@N` from one prepared statement, for hot read paths (the API's cache of
 * rendered answers) that must learn cheaply whether a version is still approved or has been retired
 * since. Only `status` is read: it precedes the large `content` column in the row, so SQLite never
 * walks the content's overflow pages (reading `sha256`, stored after it, would). The hash of slug@N
 * needs no re-check: content and numbers are immutable (drizzle/0001_immutability.sql).
 * Full resolution with messages stays in resolveRow (versions.ts).
 */
import { and, eq, sql } from 'drizzle-orm';
import type { Registry } from '../registry/open.ts';
import { materials, materialVersions } from '../registry/schema.ts';
import type { VersionStatus } from '../registry/types.ts';

function prepare(registry: Registry) {
  return registry.db
    .select({ status: materialVersions.status })
    .from(materialVersions)
    .innerJoin(materials, eq(materials.id, materialVersions.materialId))
    .where(and(eq(materials.slug, sql.placeholder('slug')), eq(materialVersions.number, sql.placeholder('number'))))
    .prepare();
}

const prepared = new WeakMap<Registry, ReturnType<typeof prepare>>();

/** Status of slug@number, or undefined when there is no such version. */
export function versionStatus(registry: Registry, slug: string, number: number): VersionStatus | undefined {
  let statement = prepared.get(registry);
  if (!statement) prepared.set(registry, (statement = prepare(registry)));
  return statement.get({ slug, number })?.status;
}
