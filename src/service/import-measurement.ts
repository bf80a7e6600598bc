/**
 * The import pipeline behind `nkledger import` and the API's upload: parse the measured table,
 * optionally fit a model, run the Kramers-Kronig check, and store everything as one new draft.
 * Two stages: `prepareMeasurement` is the CPU-heavy part (parse, fit, KK: no registry, plain data in
 * and out, so the server runs it on a worker thread, src/service/compute-pool.ts) and
 * `storeMeasurement` the one write transaction. The fit and the check run before (outside) the
 * transaction, so writers never wait on them.
 */
import { InputError } from '../errors.ts';
import { fitTable, type FitOptions } from '../fit/fit.ts';
import type { FitReport } from '../fit/types.ts';
import type { KkOptions } from '../kk/check.ts';
import { parseNkTable, type DetectedFormat, type ImportOptions } from '../io/parse-table.ts';
import { sha256Hex } from '../registry/canonical.ts';
import type { Registry } from '../registry/open.ts';
import type { NkTable } from '../table.ts';
import type { StoredKkReport } from '../registry/types.ts';
import { writeTransaction } from '../registry/records.ts';
import { fitOptionsForAbsentK, kkCheck } from './absent-k.ts';
import { importVersion, type ImportedVersion } from './versions.ts';
import type { ProvenanceInput } from './provenance.ts';

export interface MeasurementImport {
  slug: string;
  /** The file's bytes, exactly as read (their SHA-256 is recorded as source_sha256). */
  bytes: Uint8Array;
  /** The file name as given (only its last path component is stored as source_file). */
  file: string;
  importOptions?: ImportOptions;
  /** Fit this model (fitTable) and store its report with the table. */
  fit?: FitOptions;
  /** Run the Kramers-Kronig check and store its report (default true); options pass through. */
  kk?: boolean | KkOptions;
  provenance?: ProvenanceInput;
}

export interface MeasurementImported extends ImportedVersion {
  /** Warnings of the table import (e.g. small negative k set to 0, no k column). */
  import_warnings: string[];
  /** The lines above the file's header, as stored in the provenance (empty when none). */
  preamble: string[];
}

/** What the heavy stage computed: plain data, so it crosses a worker-thread boundary unchanged. */
export interface PreparedMeasurement {
  table: NkTable;
  fit: FitReport | null;
  kk: StoredKkReport | null;
  warnings: string[];
  sourceSha256: string;
  /** Provenance the file itself gives: its preamble and absent columns (omitted when none). */
  fileProvenance: Pick<ProvenanceInput, 'preamble' | 'absent_columns'>;
  preamble: string[];
}

/** What the file itself says about its origin: the preamble above the header, the columns it lacked. */
export function fileProvenance(detected: DetectedFormat): Pick<ProvenanceInput, 'preamble' | 'absent_columns'> {
  return {
    ...(detected.preamble.length > 0 && { preamble: detected.preamble }),
    ...(!detected.hasK && { absent_columns: ['k'] }),
  };
}

/** The KK report of a table ("no k column" when its file had none), or an InputError that says how to import without it. */
export function kkReportFor(table: NkTable, options: KkOptions = {}, kAbsent = false): StoredKkReport {
  try {
    return kkCheck(table, options, kAbsent);
  } catch (err) {
    if (err instanceof InputError) {
      throw new InputError(
        'kk-not-possible',
        `the Kramers-Kronig check cannot run on this table (${err.message}); store it without a KK report`,
        err.location,
        { remedies: [{ option: 'kk', value: false }] },
      );
    }
    throw err;
  }
}

/** Parse, fit and check (no registry): the CPU-heavy stage of an import. */
export function prepareMeasurement(input: Omit<MeasurementImport, 'slug' | 'provenance'>): PreparedMeasurement {
  const imported = parseNkTable(input.bytes, { ...input.importOptions, file: input.file });
  const table = imported.table;
  const kAbsent = !imported.detected.hasK;
  const kk = input.kk === false ? null : kkReportFor(table, input.kk === true || input.kk === undefined ? {} : input.kk, kAbsent);
  const fit = input.fit ? fitOptionsForAbsentK(input.fit, kAbsent) : undefined;
  return {
    table,
    fit: fit ? fitTable(table, fit.options) : null,
    kk,
    warnings: [...imported.warnings, ...(fit?.notices ?? [])],
    sourceSha256: sha256Hex(input.bytes),
    fileProvenance: fileProvenance(imported.detected),
    preamble: imported.detected.preamble,
  };
}

/** Store a prepared measurement as a new draft of `slug` (one write transaction). */
export async function storeMeasurement(
  registry: Registry,
  input: Pick<MeasurementImport, 'slug' | 'file' | 'provenance'>,
  prepared: PreparedMeasurement,
  actor: string,
): Promise<MeasurementImported> {
  const stored = await importVersion(
    registry,
    {
      slug: input.slug,
      table: prepared.table,
      fit: prepared.fit,
      kk: prepared.kk,
      provenance: {
        ...input.provenance,
        source_file: input.provenance?.source_file ?? input.file,
        source_sha256: prepared.sourceSha256,
        ...prepared.fileProvenance,
      },
    },
    actor,
  );
  return { ...stored, import_warnings: prepared.warnings, preamble: prepared.preamble };
}

/** Parse, check and store a measured table as a new draft of `slug`. */
export async function importMeasurement(registry: Registry, input: MeasurementImport, actor: string): Promise<MeasurementImported> {
  return storeMeasurement(registry, input, prepareMeasurement(input), actor);
}

/**
 * Several files as drafts of their materials in one transaction: every file is parsed, checked and fitted
 * first (a refusal names its file), then all versions are written together or none is (a duplicate or an
 * unknown material rolls back the whole batch; each version's own transaction joins the batch's as a savepoint).
 */
export async function importMeasurements(registry: Registry, inputs: MeasurementImport[], actor: string): Promise<MeasurementImported[]> {
  if (inputs.length === 0) throw new InputError('no-files', 'no files to import');
  return storeMeasurements(registry, inputs, inputs.map(prepareMeasurement), actor);
}

/** Store prepared measurements as drafts in one transaction: all or none (the API prepares them on its compute threads). */
export async function storeMeasurements(
  registry: Registry,
  inputs: Pick<MeasurementImport, 'slug' | 'file' | 'provenance'>[],
  prepared: PreparedMeasurement[],
  actor: string,
): Promise<MeasurementImported[]> {
  return writeTransaction(registry, async () => {
    const stored: MeasurementImported[] = [];
    for (const [i, input] of inputs.entries()) stored.push(await storeMeasurement(registry, input, prepared[i], actor));
    return stored;
  });
}
