/**
 * Evaluating a fitted model, apart from the fitter (fit.ts): reading a stored version's n,k needs the model
 * catalogue only, not the minimizer and its statistics, so `nkledger eval` does not load them.
 */
import { buildModel } from '../models/catalogue.ts';
import type { FitReport } from './types.ts';

/** n and k of a fitted model at the given wavelengths (nm). Outside report.range_nm the model is extrapolated. */
export function evaluateFitReport(report: FitReport, wavelengthsNm: number[]): { n: number[]; k: number[] } {
  const model = buildModel(report.model, { terms: report.options.terms, urbach: report.options.urbach });
  const values = Object.fromEntries(Object.entries(report.parameters).map(([name, p]) => [name, p.value]));
  return model.nk(wavelengthsNm, values);
}
