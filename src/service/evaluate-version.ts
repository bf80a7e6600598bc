/**
 * n,k of a registry version at chosen wavelengths. Model-backed versions evaluate anywhere inside the
 * model's validity range (engineer B's evaluateFitReport); table-only versions interpolate inside the
 * measured range (engineer A's evaluateTable). Outside, the refusal names the range.
 */
import { InputError } from '../errors.ts';
import { evaluateFitReport, type FitReport } from '../fit/fit.ts';
import type { InterpolationMethod } from '../optics/interpolate.ts';
import { evaluateTable } from '../optics/table-eval.ts';
import type { Registry } from '../registry/open.ts';
import { usableRangeNm, verifiedContentOf } from '../registry/records.ts';
import type { VersionContent, VersionStatus } from '../registry/types.ts';
import { resolveRow } from './versions.ts';

/** Relative slack at the ends of a validity range, for wavelengths converted from other units. */
const RANGE_SLACK = 1e-12;

export interface VersionEvaluation {
  ref: string;
  sha256: string;
  status: VersionStatus;
  /** What produced the numbers: the fitted model or interpolation in the table. */
  source: 'model' | 'table';
  model: string | null;
  interpolation: InterpolationMethod | null;
  range_nm: [number, number];
  wavelength_nm: number[];
  n: number[];
  k: number[];
  notices: string[];
  warnings: string[];
}

/** Evaluate stored content (model if present, else table) at wavelengths inside its usable range. */
export function evaluateContent(
  content: VersionContent,
  wavelengthsNm: number[],
  method: InterpolationMethod = 'linear',
  label = 'this version',
): { n: number[]; k: number[]; source: 'model' | 'table' } {
  if (!content.fit) return { ...evaluateTable(content.table!, wavelengthsNm, method), source: 'table' };
  const [lo, hi] = usableRangeNm(content);
  for (const w of wavelengthsNm) {
    if (!Number.isFinite(w)) throw new InputError('bad-wavelength', `wavelength ${w} is not a finite number`);
    if (w < lo * (1 - RANGE_SLACK) || w > hi * (1 + RANGE_SLACK)) {
      throw new InputError('outside-validity-range', `${w} nm is outside the validity range of ${label}'s ${content.fit.model} model, ${lo}–${hi} nm (the range it was fitted over)`);
    }
  }
  return { ...evaluateFitReport(content.fit as unknown as FitReport, wavelengthsNm), source: 'model' };
}

export function evaluateVersion(
  registry: Registry,
  ref: string,
  wavelengthsNm: number[],
  options: { interpolation?: InterpolationMethod } = {},
): VersionEvaluation {
  const { row, resolved } = resolveRow(registry, ref);
  return evaluateResolved(resolved, verifiedContentOf(row, resolved.ref), wavelengthsNm, options);
}

/** Evaluate the verified content of a version already resolved (e.g. by loadTableOrVersion). */
export function evaluateResolved(
  resolved: { ref: string; sha256: string; status: VersionStatus; notices?: string[]; warnings?: string[] },
  content: VersionContent,
  wavelengthsNm: number[],
  options: { interpolation?: InterpolationMethod } = {},
): VersionEvaluation {
  const method = options.interpolation ?? 'linear';
  const { n, k, source } = evaluateContent(content, wavelengthsNm, method, resolved.ref);
  return {
    ref: resolved.ref,
    sha256: resolved.sha256,
    status: resolved.status,
    source,
    model: content.fit?.model ?? null,
    interpolation: source === 'table' ? method : null,
    range_nm: usableRangeNm(content),
    wavelength_nm: wavelengthsNm,
    n,
    k,
    notices: resolved.notices ?? [],
    warnings: resolved.warnings ?? [],
  };
}
