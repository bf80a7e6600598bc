/** Materials: create, list, and the history of one (its versions and audit log). */
import { asc, count, eq } from 'drizzle-orm';
import { binaryOrder } from '../registry/sql.ts';
import { ConflictError, InputError } from '../errors.ts';
import type { Registry } from '../registry/open.ts';
import {
  appendAudit,
  findMaterial,
  latestApprovedNumbers,
  materialRecord,
  nowIso,
  versionRecord,
  versionSummaryRows,
  writeTransaction,
} from '../registry/records.ts';
import { checkSlug, formatRef } from '../registry/refs.ts';
import { first } from '../registry/sql.ts';
import type { AuditEntry, MaterialRecord, VersionRecord, VersionStatus } from '../registry/types.ts';
import { checkActor } from './actor.ts';
import { hiddenLookAlike } from './look-alike.ts';

export interface NewMaterial {
  slug: string;
  /** Display name, e.g. "PECVD silicon nitride, recipe A". */
  name: string;
  description?: string;
  tags?: string[];
}

const TAG_PATTERN = /^[\p{L}\p{N}][\p{L}\p{N}._+-]{0,39}$/u;

function checkName(text: string | undefined): string {
  const name = text?.trim() ?? '';
  if (name === '' || name.length > 200)
    throw new InputError('material-name', 'a material needs a display name, at most 200 characters', {}, { option: 'name' });
  return name;
}

function checkDescription(text: string | undefined): string {
  const description = (text ?? '').trim();
  if (description.length > 5000)
    throw new InputError('material-description', 'the description is longer than 5000 characters', {}, { option: 'description' });
  return description;
}

function checkTags(given: string[]): string[] {
  const tags = [...new Set(given.map((t) => t.trim()).filter(Boolean))].sort();
  for (const tag of tags) {
    if (!TAG_PATTERN.test(tag))
      throw new InputError(
        'material-tag',
        `"${tag}" is not a tag (letters, digits, . _ + -, at most 40 characters)`,
        {},
        {
          option: 'tag',
          value: tag,
        },
      );
  }
  return tags;
}

/**
 * Refuse a slug or display name that reads like another material's but is not the same text (confusable
 * letters, other Unicode forms, width variants, invisible characters; look-alike.ts): a lab that finds two
 * "SiO2" entries cannot tell which one its designs pin. `except` is the material being renamed.
 */
async function refuseLookAlikes(registry: Registry, slug: string | undefined, name: string | undefined, except?: string): Promise<void> {
  const { materials } = registry.tables;
  const others = await registry.db.select({ slug: materials.slug, name: materials.name }).from(materials);
  for (const other of others) {
    if (other.slug === except) continue;
    if (slug !== undefined && hiddenLookAlike(slug, other.slug)) {
      throw new InputError(
        'material-look-alike',
        `the slug "${slug}" reads like that of the existing material ${other.slug} (they differ only in look-alike characters); choose a slug that reads differently`,
        {},
        { option: 'slug', value: slug },
      );
    }
    if (name !== undefined && hiddenLookAlike(name, other.name)) {
      throw new InputError(
        'material-look-alike',
        `the name ${JSON.stringify(name)} reads like ${JSON.stringify(other.name)}, the name of ${other.slug}, but is not the same text (look-alike letters, another Unicode form or width, or invisible characters); use the same name or one that reads differently`,
        {},
        { option: 'name', value: name },
      );
    }
  }
}

/** Create a material (no versions yet). Refuses a taken slug with ConflictError, and a look-alike slug or name. */
export async function createMaterial(registry: Registry, input: NewMaterial, actor: string): Promise<MaterialRecord> {
  const { materials } = registry.tables;
  const who = checkActor(actor);
  const slug = checkSlug(input.slug);
  const name = checkName(input.name);
  const description = checkDescription(input.description);
  const tags = checkTags(input.tags ?? []);
  return writeTransaction(registry, async () => {
    const taken = await first(registry.db.select({ id: materials.id }).from(materials).where(eq(materials.slug, slug)).limit(1));
    if (taken) throw new ConflictError(`material "${slug}" already exists`, 'material-exists');
    await refuseLookAlikes(registry, slug, name);
    const [row] = await registry.db
      .insert(materials)
      .values({ slug, name, description, tags: JSON.stringify(tags), createdBy: who, createdAt: nowIso() })
      .returning();
    await appendAudit(registry, {
      actor: who,
      action: 'material.create',
      materialId: row.id,
      material: slug,
      detail: { slug, name, description, tags },
    });
    return materialRecord(registry, row);
  });
}

/** A change to a material's description fields; the slug never changes (designs and lockfiles name it). */
export interface MaterialEdit {
  name?: string;
  description?: string;
  /** The whole new tag set (the API's PATCH). */
  tags?: string[];
  /** Tags to add and to remove (the CLI's --tag / --untag), applied after `tags`. */
  addTags?: string[];
  removeTags?: string[];
}

/** Edit name, description or tags (audit row `material.edit` with the old and new values of what changed). */
export async function editMaterial(
  registry: Registry,
  slugText: string,
  edit: MaterialEdit,
  actor: string,
): Promise<MaterialRecord & { changed: string[] }> {
  const { materials } = registry.tables;
  const who = checkActor(actor);
  const slug = checkSlug(slugText);
  if ([edit.name, edit.description, edit.tags, edit.addTags, edit.removeTags].every((v) => v === undefined)) {
    throw new InputError('material-edit-empty', 'nothing to change: give a new name, description or tags');
  }
  const name = edit.name === undefined ? undefined : checkName(edit.name);
  const description = edit.description === undefined ? undefined : checkDescription(edit.description);
  const added = checkTags(edit.addTags ?? []);
  return writeTransaction(registry, async () => {
    const row = await findMaterial(registry, slug);
    if (name !== undefined) await refuseLookAlikes(registry, undefined, name, slug);
    const before = { name: row.name, description: row.description, tags: JSON.parse(row.tags) as string[] };
    const removed = new Set((edit.removeTags ?? []).map((t) => t.trim()));
    const unknown = [...removed].find((t) => !(edit.tags ?? before.tags).includes(t) && !added.includes(t));
    if (unknown !== undefined)
      throw new InputError(
        'material-tag',
        `${slug} has no tag "${unknown}" to remove (its tags: ${before.tags.join(', ') || 'none'})`,
        {},
        {
          option: 'untag',
          value: unknown,
        },
      );
    const after = {
      name: name ?? before.name,
      description: description ?? before.description,
      tags: checkTags([...(edit.tags ?? before.tags), ...added].filter((t) => !removed.has(t))),
    };
    const changed = (['name', 'description', 'tags'] as const).filter((f) => JSON.stringify(before[f]) !== JSON.stringify(after[f]));
    if (changed.length > 0) {
      await registry.db
        .update(materials)
        .set({ name: after.name, description: after.description, tags: JSON.stringify(after.tags) })
        .where(eq(materials.id, row.id));
      await appendAudit(registry, {
        actor: who,
        action: 'material.edit',
        materialId: row.id,
        material: slug,
        detail: { slug, ...Object.fromEntries(changed.map((f) => [f, { from: before[f], to: after[f] }])) },
      });
    }
    return { ...(await materialRecord(registry, await findMaterial(registry, slug))), changed };
  });
}

/** All materials, by slug; optionally only those carrying `tag`. */
export async function listMaterials(registry: Registry, filter: { tag?: string } = {}): Promise<MaterialRecord[]> {
  const { materials } = registry.tables;
  const rows = await registry.db
    .select()
    .from(materials)
    .orderBy(asc(binaryOrder(registry, materials.slug)));
  const latest = await latestApprovedNumbers(registry);
  const records = await Promise.all(rows.map((row) => materialRecord(registry, row, latest)));
  return records.filter((m) => filter.tag === undefined || m.tags.includes(filter.tag));
}

/** How many versions of each material are in each status (one query; materials without versions are absent). */
export async function versionStatusCounts(registry: Registry): Promise<Map<string, Record<VersionStatus, number>>> {
  const { materials, materialVersions } = registry.tables;
  const rows = await registry.db
    .select({ slug: materials.slug, status: materialVersions.status, count: count() })
    .from(materialVersions)
    .innerJoin(materials, eq(materials.id, materialVersions.materialId))
    .groupBy(materials.slug, materialVersions.status);
  const counts = new Map<string, Record<VersionStatus, number>>();
  for (const row of rows) {
    let entry = counts.get(row.slug);
    if (!entry) counts.set(row.slug, (entry = { draft: 0, approved: 0, retired: 0, withdrawn: 0 }));
    entry[row.status] = row.count;
  }
  return counts;
}

/** One material with all its versions (oldest first). */
export async function getMaterial(registry: Registry, slug: string): Promise<{ material: MaterialRecord; versions: VersionRecord[] }> {
  const row = await findMaterial(registry, checkSlug(slug));
  return {
    material: await materialRecord(registry, row),
    versions: (await versionSummaryRows(registry, row.id)).map((v) => versionRecord(row.slug, v)),
  };
}

/** A material's versions and its audit log, oldest first. */
export async function history(
  registry: Registry,
  slug: string,
): Promise<{ material: MaterialRecord; versions: VersionRecord[]; audit: AuditEntry[] }> {
  const { auditLog } = registry.tables;
  const row = await findMaterial(registry, checkSlug(slug));
  const rows = await versionSummaryRows(registry, row.id);
  const numberById = new Map(rows.map((v) => [v.id, v.number]));
  const audit = (await registry.db.select().from(auditLog).where(eq(auditLog.materialId, row.id)).orderBy(asc(auditLog.id))).map((a) => ({
    id: a.id,
    at: a.at,
    actor: a.actor,
    action: a.action,
    ref: a.versionId === null ? null : formatRef(row.slug, numberById.get(a.versionId)!),
    detail: JSON.parse(a.detail) as Record<string, unknown>,
  }));
  return { material: await materialRecord(registry, row), versions: rows.map((v) => versionRecord(row.slug, v)), audit };
}
