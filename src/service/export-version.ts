/**
 * Export of a registry version. CSV: the measured table (or, for a model-only version, the model on a
 * regular grid over its validity range) with `#` header lines naming the pin and hash — the
 * importer skips them, so an export imports back. With `source: 'model'`, the fitted model on that grid even when
 * the version also holds a table. JSON: the record with content and provenance, from
 * which anyone can recompute the SHA-256 (DEVELOPERS.md, "Canonical serialization and hashing").
 */
import { InputError } from '../errors.ts';
import { exportTable } from '../io/export.ts';
import type { SpectralUnit } from '../optics/units.ts';
import type { Registry } from '../registry/open.ts';
import { usableRangeNm } from '../registry/records.ts';
import type { NkTable } from '../table.ts';
import { evaluateContent } from './evaluate-version.ts';
import { showVersion } from './versions.ts';

export type VersionExportFormat = 'csv' | 'json';
export const VERSION_EXPORT_FORMATS: readonly VersionExportFormat[] = ['csv', 'json'];

/** Grid step for model-only CSV exports, nm. */
export const DEFAULT_MODEL_STEP_NM = 1;

export interface VersionExport {
  ref: string;
  sha256: string;
  text: string;
  notices: string[];
  warnings: string[];
}

/** Wavelengths from lo to hi (inclusive) every stepNm, the last one exactly hi. */
export function gridNm(lo: number, hi: number, stepNm: number): number[] {
  if (!(stepNm > 0)) throw new InputError('bad-step', `the step must be a positive number of nm, got ${stepNm}`);
  const count = Math.floor((hi - lo) / stepNm + 1e-9);
  if (count > 1_000_000) throw new InputError('bad-step', `a ${stepNm} nm step over ${lo}–${hi} nm gives more than a million rows`);
  const grid = Array.from({ length: count + 1 }, (_, i) => lo + i * stepNm);
  if (grid[grid.length - 1] < hi) grid.push(hi);
  return grid;
}

export async function exportVersion(
  registry: Registry,
  ref: string,
  format: VersionExportFormat,
  options: { xUnit?: SpectralUnit; stepNm?: number; source?: 'table' | 'model' } = {},
): Promise<VersionExport> {
  const v = await showVersion(registry, ref);

  const base = { ref: v.ref, sha256: v.sha256, notices: v.notices, warnings: v.warnings };
  if (format === 'json') return { ...base, text: `${JSON.stringify(v, null, 2)}\n` };
  let table: NkTable;
  let origin: string;
  if (options.source === 'model' && !v.content.fit) {
    throw new InputError('export-no-model', `${v.ref} holds no fitted model: export its table instead`, {}, { option: 'source' });
  }
  if (v.content.table && options.source !== 'model') {
    table = v.content.table;
    origin = 'measured table';
  } else {
    const [lo, hi] = usableRangeNm(v.content);
    const wavelengthNm = gridNm(lo, hi, options.stepNm ?? DEFAULT_MODEL_STEP_NM);
    const { n, k } = evaluateContent(v.content, wavelengthNm);
    table = { wavelengthNm, n, k };
    origin = `${v.content.fit!.model} model evaluated every ${options.stepNm ?? DEFAULT_MODEL_STEP_NM} nm over its validity range`;
  }
  const header = [`# nkledger ${v.ref} (${v.status}) sha256:${v.sha256}`, `# ${origin}`];
  return { ...base, text: `${header.join('\r\n')}\r\n${exportTable(table, 'csv', options.xUnit ?? 'nm')}` };
}
