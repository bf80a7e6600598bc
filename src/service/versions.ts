/**
 * Versions: import a new draft, resolve a reference, show a version. Content is checked, serialized
 * canonically and hashed before the write; the version number is assigned inside the write transaction.
 */
import { and, desc, eq, like, ne } from 'drizzle-orm';
import { ConflictError, InputError, NotFoundError } from '../errors.ts';
import type { NkTable } from '../table.ts';
import { canonicalJson } from '../registry/canonical.ts';
import type { Registry } from '../registry/open.ts';
import {
  appendAudit,
  existingVersions,
  verifiedContentOf,
  findMaterial,
  findVersion,
  latestApprovedNumber,
  nowIso,
  versionRecord,
  versionSha256,
  writeTransaction,
  type MaterialRow,
  type VersionRow,
} from '../registry/records.ts';
import { formatRef, parseRef } from '../registry/refs.ts';
import { first } from '../registry/sql.ts';

import type { StoredFitReport, StoredKkReport, VersionContent, VersionDetail, VersionRecord, VersionStatus } from '../registry/types.ts';
import { checkActor } from './actor.ts';
import { normalizeProvenance, type ProvenanceInput } from './provenance.ts';

export interface NewVersion {
  slug: string;
  /** The normalized table (parseNkTable result), if any. */
  table?: NkTable | null;
  /** A fitted model (FitReport), if any. */
  fit?: StoredFitReport | null;
  /** A Kramers-Kronig report (KkReport), if any. */
  kk?: StoredKkReport | null;
  provenance?: ProvenanceInput;
}

export interface ImportedVersion {
  ref: string;
  version: number;
  sha256: string;
  status: VersionStatus;
  warnings: string[];
}

/** A reference resolved to one version. */
export interface ResolvedRef {
  /** The pin `slug@N` it resolved to. */
  ref: string;
  slug: string;
  version: number;
  status: VersionStatus;
  sha256: string;
  /** Information, e.g. that a bare slug is not a pin. */
  notices: string[];
  /** Cautions: retired, withdrawn or draft versions. */
  warnings: string[];
}

function checkTable(table: NkTable): NkTable {
  const { wavelengthNm: x, n, k } = table;
  const fail = (msg: string): never => {
    throw new InputError('content-table', `the table to store is not a normalized n,k table: ${msg}`);
  };
  if (!Array.isArray(x) || x.length < 2) fail('it needs at least two rows');
  for (const [name, col] of Object.entries({ n, k, sigmaN: table.sigmaN, sigmaK: table.sigmaK })) {
    if (col === undefined && (name === 'sigmaN' || name === 'sigmaK')) continue;
    if (!Array.isArray(col) || col.length !== x.length) fail(`column ${name} does not have ${x.length} values`);
    if (!col!.every(Number.isFinite)) fail(`column ${name} holds a value that is not a finite number`);
  }
  for (let i = 0; i < x.length; i++) {
    if (!Number.isFinite(x[i]) || x[i] <= 0 || (i > 0 && x[i] <= x[i - 1])) fail('wavelengths must be positive and strictly ascending');
  }
  const clean: NkTable = { wavelengthNm: [...x], n: [...n], k: [...k] };
  if (table.sigmaN) clean.sigmaN = [...table.sigmaN];
  if (table.sigmaK) clean.sigmaK = [...table.sigmaK];
  return clean;
}

function checkFit(fit: StoredFitReport): StoredFitReport {
  const range = fit.range_nm;
  if (typeof fit.model !== 'string' || !fit.parameters || !Array.isArray(range) || !(range[0] < range[1])) {
    throw new InputError('content-fit', 'the fit report to store needs model, parameters and range_nm [min, max]');
  }
  return fit;
}

/**
 * Store a new draft version of `input.slug`. The number is the material's last number + 1, taken
 * inside a BEGIN IMMEDIATE transaction together with the audit row. Refuses content identical to a
 * version that is not withdrawn (ConflictError naming it).
 */
export async function importVersion(registry: Registry, input: NewVersion, actor: string): Promise<ImportedVersion> {
  const { materials, materialVersions } = registry.tables;
  const who = checkActor(actor);
  const slug = parseRef(input.slug).slug;
  const content: VersionContent = {
    table: input.table ? checkTable(input.table) : null,
    fit: input.fit ? checkFit(input.fit) : null,
    kk: input.kk ?? null,
  };
  if (!content.table && !content.fit) throw new InputError('content-empty', 'a version needs a table or a fitted model');
  const provenance = normalizeProvenance(input.provenance);
  const contentJson = canonicalJson(content);
  const sha256 = versionSha256(content, provenance);
  const warnings: string[] = [];
  if (content.kk && content.kk.verdict === 'inconsistent') {
    warnings.push(
      'the Kramers-Kronig check found n and k inconsistent: an approver sees it in the review and must give a reason to approve this version',
    );
  }

  return writeTransaction(registry, async () => {
    const material = await findMaterial(registry, slug);
    const twin = await first(
      registry.db
        .select({ number: materialVersions.number })
        .from(materialVersions)
        .where(and(eq(materialVersions.materialId, material.id), eq(materialVersions.sha256, sha256), ne(materialVersions.status, 'withdrawn')))
        .limit(1),
    );
    if (twin) throw new ConflictError(`identical content and provenance are already stored as ${formatRef(slug, twin.number)}`, 'version-duplicate');
    const number = material.lastVersion + 1;
    await registry.db.update(materials).set({ lastVersion: number }).where(eq(materials.id, material.id));
    const [row] = await registry.db
      .insert(materialVersions)
      .values({
        materialId: material.id,
        number,
        status: 'draft',
        content: contentJson,
        sha256,
        sample: provenance.sample,
        substrate: provenance.substrate,
        process: provenance.process,
        instrument: provenance.instrument,
        method: provenance.method,
        anglesDeg: provenance.angles_deg === null ? null : JSON.stringify(provenance.angles_deg),
        measuredOn: provenance.measured_on,
        operator: provenance.operator,
        sourceFile: provenance.source_file,
        sourceSha256: provenance.source_sha256,
        notes: provenance.notes,
        preamble: provenance.preamble === undefined ? null : JSON.stringify(provenance.preamble),
        absentColumns: provenance.absent_columns === undefined ? null : JSON.stringify(provenance.absent_columns),
        createdBy: who,
        createdAt: nowIso(),
      })
      .returning({ id: materialVersions.id });
    await appendAudit(registry, {
      actor: who,
      action: 'version.import',
      materialId: material.id,
      versionId: row.id,
      material: slug,
      version: number,
      contentSha256: sha256,
      status: { from: null, to: 'draft' },
      detail: { ref: formatRef(slug, number), sha256, model: content.fit?.model ?? null, source_file: provenance.source_file },
    });
    return { ref: formatRef(slug, number), version: number, sha256, status: 'draft' as const, warnings };
  });
}

/** Resolve a reference to its material and version rows, with notices and warnings (for service use). */
export async function resolveRow(registry: Registry, ref: string): Promise<{ material: MaterialRow; row: VersionRow; resolved: ResolvedRef }> {
  const parsed = parseRef(ref);
  const material = await findMaterial(registry, parsed.slug);
  const notices: string[] = [];
  let row: VersionRow;
  if (parsed.kind === 'number') {
    row = await findVersion(registry, material, parsed.version);
  } else if (parsed.kind === 'hash') {
    row = await byHashPrefix(registry, material, parsed.hashPrefix);
  } else {
    const latest = await latestApprovedNumber(registry, material.id);
    if (latest === null) throw new NotFoundError(await noApprovedVersion(registry, material), 'no-approved-version');
    row = await findVersion(registry, material, latest);
    notices.push(
      `"${material.slug}" means its latest approved version, now ${formatRef(material.slug, latest)}; this is not a pin (pin ${formatRef(material.slug, latest)} or ${material.slug}@sha256:${row.sha256.slice(0, 12)})`,
    );
  }
  const pin = formatRef(material.slug, row.number);
  return {
    material,
    row,
    resolved: {
      ref: pin,
      slug: material.slug,
      version: row.number,
      status: row.status,
      sha256: row.sha256,
      notices,
      warnings: statusWarnings(pin, row),
    },
  };
}

/** Why a bare slug resolves to nothing: no versions at all, or none approved (and what the newest one is). */
async function noApprovedVersion(registry: Registry, material: MaterialRow): Promise<string> {
  if (material.lastVersion === 0) return `${material.slug} has no approved version: ${existingVersions(material)}`;
  const newest = await findVersion(registry, material, material.lastVersion);
  const pin = formatRef(material.slug, newest.number);
  const next = newest.status === 'draft' ? `, waiting for approval by someone other than its creator` : '';
  return `${material.slug} has no approved version (its newest is ${pin}, ${newest.status}${next}); a bare slug means the latest approved version, so name one explicitly, e.g. ${pin}`;
}

async function byHashPrefix(registry: Registry, material: MaterialRow, prefix: string): Promise<VersionRow> {
  const { materialVersions } = registry.tables;
  const rows = await registry.db
    .select()
    .from(materialVersions)
    .where(and(eq(materialVersions.materialId, material.id), like(materialVersions.sha256, `${prefix.toLowerCase()}%`)))
    .orderBy(desc(materialVersions.number));
  if (rows.length === 0) throw new NotFoundError(`${material.slug} has no version whose SHA-256 starts with ${prefix}`, 'version-unknown');
  const hashes = new Set(rows.map((r) => r.sha256));
  if (hashes.size > 1) {
    throw new ConflictError(
      `${material.slug}@sha256:${prefix} is ambiguous: it matches ${rows.map((r) => formatRef(material.slug, r.number)).join(', ')}; give more digits`,
      'ref-ambiguous',
    );
  }
  // The same content may exist twice only when all but one copy was withdrawn: prefer the live one.
  return rows.find((r) => r.status !== 'withdrawn') ?? rows[0];
}

/** The cautions a version's status calls for wherever it is used. */
export function statusWarnings(pin: string, row: VersionRow): string[] {
  switch (row.status) {
    case 'retired':
      return [
        `${pin} is retired (${row.retiredAt} by ${row.retiredBy}: ${row.retireReason}); it still resolves, but check for a newer approved version`,
      ];
    case 'withdrawn':
      return [
        `${pin} was withdrawn (${row.withdrawnAt} by ${row.withdrawnBy}${row.withdrawReason ? `: ${row.withdrawReason}` : ''}); nobody should use it`,
      ];
    case 'draft':
      return [`${pin} is a draft that nobody has approved yet`];
    default:
      return [];
  }
}

/** Resolve `slug@N`, `slug@sha256:PREFIX` or a bare slug (latest approved) to one version. */
export async function resolveRef(registry: Registry, ref: string): Promise<ResolvedRef> {
  return (await resolveRow(registry, ref)).resolved;
}

/** A version with its content and provenance. */
export async function showVersion(registry: Registry, ref: string): Promise<VersionDetail> {
  const { material, row, resolved } = await resolveRow(registry, ref);
  const content = verifiedContentOf(row, resolved.ref);
  return { ...versionRecord(material.slug, row, content), content, notices: resolved.notices, warnings: resolved.warnings };
}

/** Version record without content (for lists and write results). */
export async function versionSummary(registry: Registry, ref: string): Promise<VersionRecord> {
  const { material, row } = await resolveRow(registry, ref);

  return versionRecord(material.slug, row);
}
