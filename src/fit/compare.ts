/**
 * Model comparison by information criteria on one table: every model is fitted to the same rows and
 * quantities with the same weights, then ranked by AIC (Akaike 1974) and BIC (Schwarz 1978).
 * The physics caveats travel with the numbers, because a lower AIC does not make a model physical.
 */
import { InputError, NumericalError, optionRef } from '../errors.ts';
import { buildModel } from '../models/catalogue.ts';
import type { NkTable } from '../table.ts';
import { fitTable } from './fit.ts';
import { residualsAt } from './lm.ts';
import { buildProblem } from './problem.ts';
import { informationCriteria } from './statistics.ts';
import type { FitOptions, FitReport } from './types.ts';
import { minOf } from '../optics/extremes.ts';

export interface ComparedModel {
  model: string;
  /** The full fit report, or null when the fit failed numerically. */
  report: FitReport | null;
  error: string | null;
  aic: number | null;
  bic: number | null;
  /** AIC − min AIC over the compared models (0 for the best). */
  delta_aic: number | null;
  delta_bic: number | null;
  free_parameters: number | null;
  kk_consistent: boolean;
  /** Why this model's numbers may mislead (validity, Kramers-Kronig). */
  caveats: string[];
}

export interface ComparisonReport {
  models: ComparedModel[];
  best_aic: string | null;
  /** Lowest BIC; among candidates within BIC_INDIFFERENCE of it, the one with the fewest free parameters. */
  best_bic: string | null;
  /** Caveats about comparing by information criteria at all. */
  caveats: string[];
}

/**
 * BIC differences below this are "not worth more than a bare mention" (R. E. Kass and A. E. Raftery, J. Am.
 * Stat. Assoc. 90, 773 (1995)): best_bic then names the candidate with the fewest free parameters.
 */
export const BIC_INDIFFERENCE = 2;

export const COMPARISON_CAVEATS = [
  'AIC and BIC rank how well each model explains these points for its number of parameters; they say nothing about whether a model is physical.',
  'Differences below about 2 are not meaningful; above about 10 the evidence is strong (rule of thumb, K. P. Burnham and D. R. Anderson, Model Selection and Multimodel Inference, Springer 2002; from memory).',
  'Only models fitted to the same rows, quantities and weights are compared here; never compare numbers from different runs or ranges.',
  'Prefer a Kramers-Kronig-consistent model when n and k must describe one material; every model is valid only inside the fitted wavelength range.',
];

/**
 * The model best_bic names among fitted candidates: the lowest BIC, except that among candidates within
 * BIC_INDIFFERENCE of it (not evidence, Kass and Raftery 1995) the one with the fewest free parameters wins.
 */
export function bestByBic(models: Pick<ComparedModel, 'model' | 'bic' | 'free_parameters'>[]): string {
  const min = Math.min(...models.map((m) => m.bic as number));
  const close = models.filter((m) => (m.bic as number) - min < BIC_INDIFFERENCE);
  close.sort((a, b) => (a.free_parameters as number) - (b.free_parameters as number) || (a.bic as number) - (b.bic as number));
  return close[0].model;
}

/** AIC and BIC of a fitted model on the residuals an absorbing model would have (n and k rows, same weights). */
function criteriaOnAllRows(table: NkTable, report: FitReport, options: Omit<FitOptions, 'model'>): { aic: number; bic: number } {
  const model = buildModel(report.model, report.options);
  const problem = buildProblem(table, report.options.target, { rangeNm: options.rangeNm, absorbing: true, weights: options.weights });
  const values = Float64Array.from(model.parameters, (p) => report.parameters[p.name].value);
  const { r } = residualsAt(problem, model, values, [], false);
  let chi2 = 0;
  for (const v of r) chi2 += v * v;
  return informationCriteria(chi2, r.length, report.correlations.parameters.length);
}

/** Fit every spec in `specs` with the shared options (model-specific flags apply where a model accepts them). */
export function compareModels(table: NkTable, specs: string[], options: Omit<FitOptions, 'model'> = {}): ComparisonReport {
  if (specs.length < 2)
    throw new InputError('compare-needs-two', `${optionRef('compare')} needs at least two models, got ${specs.join(',') || 'none'}`);
  if (options.fix || options.init || options.bounds || options.free) {
    throw new InputError(
      'compare-no-parameter-flags',
      `${['fix', 'init', 'bounds', 'free'].map(optionRef).join(', ')} name parameters of one model; they cannot be used with ${optionRef('compare')}`,
    );
  }
  const models: ComparedModel[] = specs.map((spec) => {
    const probe = buildModel(spec); // refuses unknown names before any fitting
    const accepts = (o: 'terms' | 'urbach') => {
      try {
        buildModel(spec, { [o]: o === 'terms' ? options.terms : true });
        return true;
      } catch {
        return false;
      }
    };
    const fitOptions: FitOptions = {
      ...options,
      model: spec,
      terms: options.terms !== undefined && accepts('terms') ? options.terms : undefined,
      urbach: options.urbach && accepts('urbach') ? true : undefined,
    };
    const caveats = [...probe.notes];
    try {
      const report = fitTable(table, fitOptions);
      return {
        model: report.model,
        report,
        error: null,
        aic: report.statistics.aic,
        bic: report.statistics.bic,
        delta_aic: null,
        delta_bic: null,
        free_parameters: report.correlations.parameters.length,
        kk_consistent: report.kk_consistent,
        caveats,
      };
    } catch (err) {
      if (!(err instanceof NumericalError)) throw err;
      return {
        model: probe.spec,
        report: null,
        error: err.message,
        aic: null,
        bic: null,
        delta_aic: null,
        delta_bic: null,
        free_parameters: null,
        kk_consistent: probe.kkConsistent,
        caveats,
      };
    }
  });
  // a model with k ≡ 0 is fitted to n alone; beside absorbing models its criteria are taken on the same
  // residuals as theirs (its k residuals are the measured k, which no parameter of it can change)
  if (new Set(models.filter((m) => m.report).map((m) => buildModel(m.model, m.report!.options).absorbing)).size > 1) {
    for (const m of models) {
      if (!m.report) continue;
      const ic = criteriaOnAllRows(table, m.report, options);
      m.aic = ic.aic;
      m.bic = ic.bic;
    }
  }
  const best = (key: 'aic' | 'bic') => {
    const ok = models.filter((m) => m[key] !== null);
    if (ok.length === 0) return null;
    const min = minOf(ok.map((m) => m[key] as number));
    for (const m of ok) m[key === 'aic' ? 'delta_aic' : 'delta_bic'] = (m[key] as number) - min;
    return key === 'aic' ? ok.find((m) => m[key] === min)!.model : bestByBic(ok);
  };
  return { models, best_aic: best('aic'), best_bic: best('bic'), caveats: COMPARISON_CAVEATS };
}
