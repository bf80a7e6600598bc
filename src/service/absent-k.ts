/**
 * A table whose file had no k column stores k = 0, but that zero was never measured. The Kramers-Kronig
 * check and the fits must not read it as "no absorption": the check answers uninformative with the reason
 * "no k column" without running, and a fit of an absorbing model uses n only and says so.
 */
import { InputError } from '../errors.ts';
import type { FitOptions } from '../fit/types.ts';
import { checkKramersKronig, type KkOptions, type KkReport } from '../kk/check.ts';
import type { NkTable } from '../table.ts';

export const NO_K_COLUMN = 'no k column';

/** The KK answer for a table without a k column: the check is not run (k = 0 there is not a measurement). */
export interface NoKColumnKkReport {
  verdict: 'uninformative';
  reason: typeof NO_K_COLUMN;
  summary: string;
  points: number;
  range_nm: [number, number];
}

export type KkAnswer = KkReport | NoKColumnKkReport;

export function noKColumnReport(table: NkTable): NoKColumnKkReport {
  const wl = table.wavelengthNm;
  return {
    verdict: 'uninformative',
    reason: NO_K_COLUMN,
    summary: 'the file has no k column, so k was not measured: n cannot be checked against an absorption that is unknown',
    points: wl.length,
    range_nm: [wl[0], wl[wl.length - 1]],
  };
}

/** The KK check of a table, or the "no k column" answer when k was absent from its file. */
export function kkCheck(table: NkTable, options: KkOptions, kAbsent: boolean): KkAnswer {
  return kAbsent ? noKColumnReport(table) : checkKramersKronig(table, options);
}

/** Models whose k is not identically zero (common practice: these describe absorption bands or free carriers). */
const ABSORBING_TERMS = new Set(['tauc-lorentz', 'lorentz', 'drude']);

function isAbsorbing(options: FitOptions): boolean {
  return options.urbach === true || options.model.split('+').some((t) => ABSORBING_TERMS.has(t.trim().toLowerCase()));
}

/**
 * Fit options for a table whose k was absent: an absorbing model is fitted to n only (unless the user chose a
 * target), with a notice; a target that needs k is refused. Transparent models are left as they are (their k is 0).
 */
export function fitOptionsForAbsentK(options: FitOptions, kAbsent: boolean): { options: FitOptions; notices: string[] } {
  if (!kAbsent) return { options, notices: [] };
  if (options.target === 'k' || options.target === 'eps') {
    throw new InputError(
      'no-k-column',
      `the fit target ${options.target} needs k, and the file has no k column`,
      {},
      {
        option: 'target',
        value: options.target,
      },
    );
  }
  if (!isAbsorbing(options) || options.target === 'n') return { options, notices: [] };
  return {
    options: { ...options, target: 'n' },
    notices: [`${NO_K_COLUMN}: the ${options.model} fit uses n only (k was not measured, so its zeros are not fitted)`],
  };
}
