/**
 * n,k of a registry version at chosen wavelengths. Model-backed versions evaluate anywhere inside the
 * model's validity range (evaluateFitReport); table-only versions interpolate inside the
 * measured range (evaluateTable). Outside, the refusal names the range.
 */
import { InputError } from '../errors.ts';
import { evaluateFitReport } from '../fit/evaluate.ts';
import type { FitReport } from '../fit/types.ts';
import type { InterpolationMethod } from '../optics/interpolate.ts';
import { evaluateTable } from '../optics/table-eval.ts';
import type { Registry } from '../registry/open.ts';
import { xColumnName } from '../io/export.ts';
import { fromWavelengthNm, type SpectralUnit } from '../optics/units.ts';
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
  /** Only when extrapolation was allowed: true where the value lies outside the model's validity range. */
  extrapolated?: boolean[];
  notices: string[];
  warnings: string[];
}

export interface EvaluateOptions {
  interpolation?: InterpolationMethod;
  /** Evaluate a fitted model beyond its validity range, marking those values (a table never extrapolates). */
  extrapolate?: boolean;
}

/**
 * Evaluate stored content (model if present, else table) at wavelengths inside its usable range; with
 * `extrapolate`, a model also outside it, each such value marked in `extrapolated`.
 */
export function evaluateContent(
  content: VersionContent,
  wavelengthsNm: number[],
  method: InterpolationMethod = 'linear',
  label = 'this version',
  extrapolate = false,
): { n: number[]; k: number[]; source: 'model' | 'table'; extrapolated: boolean[] } {
  if (!content.fit) {
    try {
      return { ...evaluateTable(content.table!, wavelengthsNm, method), source: 'table', extrapolated: wavelengthsNm.map(() => false) };
    } catch (err) {
      if (extrapolate && err instanceof InputError && err.rule === 'outside-range') {
        throw new InputError('table-no-extrapolation', `${err.message}; ${label} holds a table only, and a table never extrapolates`, err.location, {
          option: 'extrapolate',
        });
      }
      throw err;
    }
  }
  const [lo, hi] = usableRangeNm(content);
  const extrapolated = wavelengthsNm.map((w) => {
    if (!Number.isFinite(w)) throw new InputError('bad-wavelength', `wavelength ${w} is not a finite number`);
    const outside = w < lo * (1 - RANGE_SLACK) || w > hi * (1 + RANGE_SLACK);
    if (outside && !extrapolate) {
      throw new InputError(
        'outside-validity-range',
        `${w} nm is outside the validity range of ${label}'s ${content.fit!.model} model, ${lo}–${hi} nm (the range it was fitted over); values beyond it are an extrapolation of the model, not backed by data`,
        {},
        { remedies: [{ option: 'extrapolate' }] },
      );
    }
    return outside;
  });
  return { ...evaluateFitReport(content.fit as unknown as FitReport, wavelengthsNm), source: 'model', extrapolated };
}

/** The warning that goes with extrapolated values (text and JSON). */
export function extrapolationWarning(e: { extrapolated?: boolean[]; range_nm: [number, number]; model: string | null }): string[] {
  const count = e.extrapolated?.filter(Boolean).length ?? 0;
  if (count === 0) return [];
  return [
    `${count} value(s) extrapolated beyond the ${e.model} model's validity range ${e.range_nm[0]}–${e.range_nm[1]} nm (marked): ` +
      'the model was not fitted there, so they are not backed by data',
  ];
}

/** The evaluation with the x column also in `unit` (wavelength_nm is always kept), named as exports name it (energy_eV …). */
export function withUnitColumn<T extends { wavelength_nm: number[] }>(e: T, unit: SpectralUnit | undefined): T {
  if (unit === undefined || unit === 'nm') return e;
  return { ...e, [xColumnName(unit)]: e.wavelength_nm.map((w) => +fromWavelengthNm(w, unit).toPrecision(12)) };
}

export async function evaluateVersion(
  registry: Registry,
  ref: string,
  wavelengthsNm: number[],
  options: EvaluateOptions = {},
): Promise<VersionEvaluation> {
  const { row, resolved } = await resolveRow(registry, ref);

  return evaluateResolved(resolved, verifiedContentOf(row, resolved.ref), wavelengthsNm, options);
}

/** Evaluate the verified content of a version already resolved (e.g. by loadTableOrVersion). */
export function evaluateResolved(
  resolved: { ref: string; sha256: string; status: VersionStatus; notices?: string[]; warnings?: string[] },
  content: VersionContent,
  wavelengthsNm: number[],
  options: EvaluateOptions = {},
): VersionEvaluation {
  const method = options.interpolation ?? 'linear';
  const { n, k, source, extrapolated } = evaluateContent(content, wavelengthsNm, method, resolved.ref, options.extrapolate);
  const range = usableRangeNm(content);
  const model = content.fit?.model ?? null;
  return {
    ref: resolved.ref,
    sha256: resolved.sha256,
    status: resolved.status,
    source,
    model,
    interpolation: source === 'table' ? method : null,
    range_nm: range,
    wavelength_nm: wavelengthsNm,
    n,
    k,
    ...(options.extrapolate && { extrapolated }),
    notices: resolved.notices ?? [],
    warnings: [...(resolved.warnings ?? []), ...extrapolationWarning({ extrapolated, range_nm: range, model })],
  };
}
