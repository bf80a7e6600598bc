/**
 * The registry's service layer in one import, for tests and scripts (the front doors import each module directly,
 * so a command loads only what it uses): `import { openRegistry, importVersion, ... } from '../service/registry.ts'`.
 * Every function takes the open Registry first; writes take the acting user's name last.
 */
export { openRegistry, registryPath, type Registry } from '../registry/open.ts';
export { canonicalJson, canonicalSha256, sha256Hex } from '../registry/canonical.ts';
export { parseRef, formatRef, checkSlug, MIN_HASH_PREFIX, type ParsedRef } from '../registry/refs.ts';
export { versionSha256 } from '../registry/records.ts';
export * from '../registry/types.ts';
export { MEASUREMENT_METHODS, VERSION_STATUSES } from '../registry/schema.ts';
export { checkActor, sameUser, userKey } from './actor.ts';
export { normalizeProvenance, parseMetaPairs, type ProvenanceInput } from './provenance.ts';
export { createMaterial, editMaterial, listMaterials, getMaterial, history, type NewMaterial, type MaterialEdit } from './materials.ts';
export { importVersion, resolveRef, showVersion, versionSummary, type NewVersion, type ImportedVersion, type ResolvedRef } from './versions.ts';
export { approve, retire, withdraw, UNACCEPTED_WARNINGS, type ApproveOptions, type ApprovalResult } from './lifecycle.ts';
export {
  reviewVersion,
  reviewQueue,
  reviewOf,
  STRONG_CORRELATION,
  type ReviewSummary,
  type ReviewQueue,
  type ReviewQueueEntry,
  type Reviewer,
  type BlockingFinding,
  type ReviewKkVerdict,
} from './review.ts';
export {
  readSettings,
  writeSetting,
  writeSettingText,
  resetSetting,
  parseSettingKey,
  SETTINGS,
  SETTING_KEYS,
  type Settings,
  type SettingKey,
} from './settings.ts';
export { verifyRegistry, backup, IMMUTABILITY_TRIGGERS, type VerifyReport, type HashMismatch } from './registry-admin.ts';
export {
  lockAdd,
  lockVerify,
  lockOutdated,
  parseLockfile,
  serializeLockfile,
  readLockfile,
  writeLockfile,
  emptyLockfile,
  LOCK_FORMAT,
  LOCK_FORMAT_VERSION,
  type Lockfile,
  type LockEntry,
  type LockAddResult,
  type LockCheck,
  type LockVerifyReport,
  type LockOutdatedEntry,
} from './lock.ts';
export { importMeasurement, kkReportFor, type MeasurementImport, type MeasurementImported } from './import-measurement.ts';
export { evaluateVersion, evaluateResolved, evaluateContent, type VersionEvaluation } from './evaluate-version.ts';
export {
  loadTableOrVersion,
  requireTable,
  type LoadedSource,
  type TableOrigin,
  type StoredVersionOrigin,
  type SourceOptions,
} from './table-source.ts';
export { exportVersion, gridNm, VERSION_EXPORT_FORMATS, type VersionExport, type VersionExportFormat } from './export-version.ts';
export { diffVersions, DIFF_GRID_POINTS, type VersionDiff, type ParameterChange, type LargestDifference } from './diff.ts';
export { diffPlotSpec, renderDiffPlot } from './diff-plot.ts';
