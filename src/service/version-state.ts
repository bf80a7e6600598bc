/**
 * The lifecycle state of `slug@N` without its content, from one prepared statement: for hot read paths
 * (the API's cache of immutable representations) that must learn cheaply whether a version is still
 * approved or has been retired since. Full resolution with messages stays in resolveRow (versions.ts).
 */
import { and, eq, sql } from 'drizzle-orm';
import type { Registry } from '../registry/open.ts';
import { materials, materialVersions } from '../registry/schema.ts';
import type { VersionStatus } from '../registry/types.ts';

export interface VersionState {
  status: VersionStatus;
  sha256: string;
  retiredAt: string | null;
}

function prepare(registry: Registry) {
  return registry.db
    .select({ status: materialVersions.status, sha256: materialVersions.sha256, retiredAt: materialVersions.retiredAt })
    .from(materialVersions)
    .innerJoin(materials, eq(materials.id, materialVersions.materialId))
    .where(and(eq(materials.slug, sql.placeholder('slug')), eq(materialVersions.number, sql.placeholder('number'))))
    .prepare();
}

const prepared = new WeakMap<Registry, ReturnType<typeof prepare>>();

/** State of slug@number, or undefined when there is no such version. */
export function versionState(registry: Registry, slug: string, number: number): VersionState | undefined {
  let statement = prepared.get(registry);
  if (!statement) prepared.set(registry, (statement = prepare(registry)));
  return statement.get({ slug, number });
}
