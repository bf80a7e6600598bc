/** Materials: create, list, and the history of one (its versions and audit log). */
import { asc, eq } from 'drizzle-orm';
import { ConflictError, InputError } from '../errors.ts';
import type { Registry } from '../registry/open.ts';
import { appendAudit, findMaterial, materialRecord, nowIso, versionRecord, writeTransaction } from '../registry/records.ts';
import { checkSlug, formatRef } from '../registry/refs.ts';
import { auditLog, materials, materialVersions } from '../registry/schema.ts';
import type { AuditEntry, MaterialRecord, VersionRecord } from '../registry/types.ts';
import { checkActor } from './actor.ts';

export interface NewMaterial {
  slug: string;
  /** Display name, e.g. "PECVD silicon nitride, recipe A". */
  name: string;
  description?: string;
  tags?: string[];
}

const TAG_PATTERN = /^[\p{L}\p{N}][\p{L}\p{N}._+-]{0,39}$/u;

/** Create a material (no versions yet). Refuses a taken slug with ConflictError. */
export function createMaterial(registry: Registry, input: NewMaterial, actor: string): MaterialRecord {
  const who = checkActor(actor);
  const slug = checkSlug(input.slug);
  const name = input.name?.trim() ?? '';
  if (name === '' || name.length > 200) throw new InputError('material-name', 'a material needs a display name (--name), at most 200 characters');
  const description = (input.description ?? '').trim();
  if (description.length > 5000) throw new InputError('material-description', 'the description is longer than 5000 characters');
  const tags = [...new Set((input.tags ?? []).map((t) => t.trim()).filter(Boolean))].sort();
  for (const tag of tags) {
    if (!TAG_PATTERN.test(tag)) throw new InputError('material-tag', `"${tag}" is not a tag (letters, digits, . _ + -, at most 40 characters)`);
  }
  return writeTransaction(registry, () => {
    const taken = registry.db.select({ id: materials.id }).from(materials).where(eq(materials.slug, slug)).get();
    if (taken) throw new ConflictError(`material "${slug}" already exists`, 'material-exists');
    const row = registry.db
      .insert(materials)
      .values({ slug, name, description, tags: JSON.stringify(tags), createdBy: who, createdAt: nowIso() })
      .returning()
      .get();
    appendAudit(registry, { actor: who, action: 'material.create', materialId: row.id, detail: { slug, name, description, tags } });
    return materialRecord(registry, row);
  });
}

/** All materials, by slug; optionally only those carrying `tag`. */
export function listMaterials(registry: Registry, filter: { tag?: string } = {}): MaterialRecord[] {
  const rows = registry.db.select().from(materials).orderBy(asc(materials.slug)).all();
  return rows
    .map((row) => materialRecord(registry, row))
    .filter((m) => filter.tag === undefined || m.tags.includes(filter.tag));
}

/** The version rows of a material, oldest first. */
function versionRows(registry: Registry, materialId: number) {
  return registry.db.select().from(materialVersions).where(eq(materialVersions.materialId, materialId)).orderBy(asc(materialVersions.number)).all();
}

/** One material with all its versions (oldest first). */
export function getMaterial(registry: Registry, slug: string): { material: MaterialRecord; versions: VersionRecord[] } {
  const row = findMaterial(registry, checkSlug(slug));
  return { material: materialRecord(registry, row), versions: versionRows(registry, row.id).map((v) => versionRecord(row.slug, v)) };
}

/** A material's versions and its audit log, oldest first. */
export function history(registry: Registry, slug: string): { material: MaterialRecord; versions: VersionRecord[]; audit: AuditEntry[] } {
  const row = findMaterial(registry, checkSlug(slug));
  const rows = versionRows(registry, row.id);
  const numberById = new Map(rows.map((v) => [v.id, v.number]));
  const audit = registry.db
    .select()
    .from(auditLog)
    .where(eq(auditLog.materialId, row.id))
    .orderBy(asc(auditLog.id))
    .all()
    .map((a) => ({
      id: a.id,
      at: a.at,
      actor: a.actor,
      action: a.action,
      ref: a.versionId === null ? null : formatRef(row.slug, numberById.get(a.versionId)!),
      detail: JSON.parse(a.detail) as Record<string, unknown>,
    }));
  return { material: materialRecord(registry, row), versions: rows.map((v) => versionRecord(row.slug, v)), audit };
}
