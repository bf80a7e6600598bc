/**
 * The one resolution of SOURCE for every command that reads n,k (inspect, eval, fit, kk): a file path, "-"
 * (standard input), or a registry version — `slug@N`, `slug@sha256:PREFIX`, or a bare slug meaning the latest
 * approved version. A file of that name always wins over a registry reference.
 */
import { existsSync } from 'node:fs';
import { InputError, NotFoundError } from '../errors.ts';
import type { DetectedFormat, ImportOptions } from '../io/import-types.ts';
import { isDatabaseUrl, openRegistry, registryPath, type Registry } from '../registry/open.ts';
import { provenanceOf, verifiedContentOf } from '../registry/records.ts';
import { parseRef } from '../registry/refs.ts';
import type { VersionContent, VersionStatus } from '../registry/types.ts';
import type { NkTable } from '../table.ts';
import { isRegistrySource, loadTable, type StdinStream } from './source.ts';
import { resolveRow } from './versions.ts';

/** Where a stored version came from: the pin it resolved to, its content hash and status. */
export interface StoredVersionOrigin {
  source: 'registry';
  /** The pin `slug@N` the source resolved to. */
  ref: string;
  sha256: string;
  status: VersionStatus;
  /** Spec of the stored fitted model, or null. */
  model: string | null;
  has_table: boolean;
}

/** How the input was read: the importer's detection for a file, the resolved version for a registry ref. */
export type TableOrigin = ({ source: 'file' } & DetectedFormat) | StoredVersionOrigin;

export interface LoadedSource {
  /** The measured table; null only for a model-only registry version. */
  table: NkTable | null;
  /** A registry version's whole verified content (table, fit report, KK report); null for a file. */
  content: VersionContent | null;
  detected: TableOrigin;
  /** Import warnings of a file; for a registry version, its status warnings (retired, withdrawn, draft). */
  warnings: string[];
  /** Information, e.g. that a bare slug is not a pin. */
  notices: string[];
  /** The file (or the stored version's file) had no k column: the table's k = 0 was not measured. */
  kAbsent: boolean;
}

export interface SourceOptions {
  /** Registry database for a version reference (--db; default NKLEDGER_DB, else ./nkledger.db). */
  db?: string;
  /** An already open registry (the HTTP API); `db` is then ignored. */
  registry?: Registry;
  /** Input flags for a file; they do not apply to a stored version. */
  importOptions?: ImportOptions;
  /** What "-" reads (default: the process's stdin). */
  stdin?: StdinStream;
}

/** Read SOURCE as a file, stdin or a registry version (see the file comment). */
export async function loadTableOrVersion(source: string, options: SourceOptions = {}): Promise<LoadedSource> {
  const importOptions = options.importOptions ?? {};
  if (!isRegistrySource(source)) {
    const imported = await loadTable(source, importOptions, options.stdin);
    return {
      table: imported.table,
      content: null,
      detected: { source: 'file', ...imported.detected },
      warnings: imported.warnings,
      notices: [],
      kAbsent: !imported.detected.hasK,
    };
  }
  const loaded = options.registry
    ? await loadVersion(options.registry, source)
    : await withExistingRegistry(source, options.db, (r) => loadVersion(r, source));
  loaded.notices.push(...ignoredFlagsNotice(loaded, importOptions, source));
  return loaded;
}

/** The notice that input flags given with a stored version were ignored (they read files), or none. */
export function ignoredFlagsNotice(loaded: LoadedSource, importOptions: ImportOptions, source: string): string[] {
  const flags = Object.keys(importOptions).filter((k) => k !== 'file');
  if (!flags.length) return [];
  return [
    `the input flags (${flags.join(', ')}) read files; ${loaded.detected.source === 'registry' ? loaded.detected.ref : source} is a stored version, so they were ignored`,
  ];
}

/** The table of a loaded source, or a refusal saying why a model-only version cannot serve `purpose`. */
export function requireTable(loaded: LoadedSource, purpose: string): NkTable {
  if (loaded.table) return loaded.table;
  const origin = loaded.detected as StoredVersionOrigin;
  throw new InputError(
    'version-without-table',
    `${origin.ref} holds only a fitted ${origin.model} model, no measured table, so there is nothing to ${purpose}; evaluate or show the model instead`,
    {},
    { value: origin.ref },
  );
}

/** Resolve a registry reference to its verified content (also for design files, whose refs are never file names). */
export async function loadVersion(registry: Registry, source: string): Promise<LoadedSource> {
  let resolved;
  try {
    resolved = await resolveRow(registry, source);
  } catch (err) {
    // A bare word that is neither a file nor a material is most likely a mistyped file name: say both.
    if (err instanceof NotFoundError && err.rule === 'material-unknown' && parseRef(source).kind === 'latest') {
      throw new NotFoundError(`no file "${source}" and no material "${source}" in the registry ${registry.path}`, 'source-not-found');
    }
    throw err;
  }
  const { row, resolved: pin } = resolved;
  const content = verifiedContentOf(row, pin.ref);
  return {
    table: content.table,
    content,
    detected: {
      source: 'registry',
      ref: pin.ref,
      sha256: pin.sha256,
      status: pin.status,
      model: content.fit?.model ?? null,
      has_table: content.table !== null,
    },
    warnings: [...pin.warnings],
    notices: [...pin.notices],
    kAbsent: provenanceOf(row).absent_columns?.includes('k') ?? false,
  };
}

/** Open the registry only if its file exists: reading a version must never create an empty database. */
export async function withExistingRegistry<T>(source: string, db: string | undefined, use: (registry: Registry) => Promise<T>): Promise<T> {
  const path = registryPath(db);
  if (path !== ':memory:' && !isDatabaseUrl(path) && !existsSync(path)) {
    throw new NotFoundError(`no file "${source}", and no registry database at ${path} to look it up as a version`, 'source-not-found');
  }
  const registry = await openRegistry(path, { create: 'never' });
  try {
    return await use(registry);
  } finally {
    await registry.close();
  }
}
