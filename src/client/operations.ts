/**
 * What the registry commands ask of a registry, whichever way it is reached: the local file through the service
 * layer (file mode, src/cli/file-registry.ts) or a server through its HTTP API (server mode, server-registry.ts).
 * Both return the same values and throw the same errors, so a command renders one way in both modes. Who acts is
 * not a parameter: file mode takes it from --as / NKLEDGER_USER / the login name, server mode from the token.
 */
import type { ImportFlags } from '../io/import-options.ts';
import type { AuditEntry, MaterialRecord, VersionDetail, VersionRecord } from '../registry/types.ts';
import type { VersionDiff } from '../service/diff.ts';
import type { ApprovalResult } from '../service/lifecycle.ts';
import type { ReviewQueue } from '../service/review.ts';
import type { VersionExport, VersionExportFormat } from '../service/export-version.ts';
import type { FitOptionText } from '../service/fit-options.ts';
import type { MeasurementImported } from '../service/import-measurement.ts';
import type { LockAddResult, Lockfile, LockOutdatedEntry, LockVerifyReport } from '../service/lock.ts';
import type { MaterialEdit, NewMaterial } from '../service/materials.ts';
import type { ProvenanceInput } from '../service/provenance.ts';
import type { VerifyReport } from '../service/registry-admin.ts';
import type { Settings } from '../service/settings.ts';
import type { LoadedSource } from '../service/table-source.ts';
import type { CreatedToken, TokenInfo } from '../service/tokens.ts';
import type { SpectralUnit } from '../optics/units.ts';

export interface MaterialHistory {
  material: MaterialRecord;
  versions: VersionRecord[];
  audit: AuditEntry[];
}

/** One file of an import, read by the client: its bytes and the name the user gave it. */
export interface ImportFile {
  bytes: Uint8Array;
  file: string;
}

/** An import as the user asked for it: the flags as text, parsed where the work is done. */
export interface ImportRequest {
  slug: string;
  files: ImportFile[];
  importFlags: ImportFlags;
  /** The model of --fit, with the fit flags as text. */
  fit?: { model: string; options: FitOptionText };
  kk: boolean;
  provenance: ProvenanceInput;
}

export interface RegistryOperations {
  materials(search?: string): Promise<MaterialRecord[]>;
  history(slug: string): Promise<MaterialHistory>;
  version(ref: string): Promise<VersionDetail>;
  /** A version's verified content as SOURCE of inspect, eval, fit and kk (computed on the client). */
  loadVersion(ref: string): Promise<LoadedSource>;
  diff(a: string, b: string): Promise<VersionDiff>;
  exportVersion(ref: string, format: VersionExportFormat, options: { xUnit?: SpectralUnit; stepNm?: number }): Promise<VersionExport>;
  createMaterial(input: NewMaterial): Promise<MaterialRecord>;
  editMaterial(slug: string, edit: MaterialEdit): Promise<MaterialRecord & { changed: string[] }>;
  importMeasurements(request: ImportRequest): Promise<MeasurementImported[]>;
  /** Approve a draft; `acceptWarnings` is the reason for approving one with blocking review findings. */
  approve(ref: string, options: { acceptWarnings?: string }): Promise<ApprovalResult>;
  /** The drafts the acting user may approve, with their review summaries. */
  review(): Promise<ReviewQueue>;
  retire(ref: string, reason: string): Promise<VersionRecord>;
  withdraw(ref: string, reason?: string): Promise<VersionRecord>;
  lockAdd(lock: Lockfile, ref: string): Promise<LockAddResult>;
  lockVerify(lock: Lockfile, options: { strict?: boolean }): Promise<LockVerifyReport>;
  lockOutdated(lock: Lockfile): Promise<LockOutdatedEntry[]>;
  verify(): Promise<VerifyReport>;
  /** A consistent snapshot written to `file` (never overwritten; no partial file on failure). */
  backup(file: string): Promise<{ path: string; pages: number }>;
  createToken(input: { user: string; role: string; expires?: string }): Promise<CreatedToken>;
  listTokens(options: { activeOnly?: boolean }): Promise<TokenInfo[]>;
  revokeToken(id: string): Promise<TokenInfo>;
  settings(): Promise<Settings>;
  /** Set a setting from the text a person types (`on`, `a,b`, `1048576`). */
  setSetting(key: string, text: string): Promise<Settings>;
  resetSetting(key: string): Promise<Settings>;
}
