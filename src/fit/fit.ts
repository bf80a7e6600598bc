/**
 * Fit a dispersion model to a measured n,k table: automatic start, optional multi-start, bounded
 * Levenberg-Marquardt (lm.ts), standard errors and correlations (statistics.ts), a plain-JSON report.
 * Pure: no I/O.
 */
import { InputError, NumericalError, optionRef } from '../errors.ts';
import { buildModel, type DispersionModel } from '../models/catalogue.ts';
import type { NkTable } from '../table.ts';
import { minimizeWithBounds, nonFiniteMessage, tableResiduals, type LmResult } from './lm.ts';
import { seededRandom } from './random.ts';
import { buildProblem, noiseFromSecondDifferences, whitenedModel, type FitProblem } from './problem.ts';
import { CORRELATION_THRESHOLD, informationCriteria, rms, SingularCovariance, uncertainty } from './statistics.ts';
import { breuschPagan, chi2Survival, runsTest } from './tests.ts';
import type { FitDiagnostic, FitOptions, FitReport, ParameterReport } from './types.ts';

export type { FitDiagnostic, FitOptions, FitReport, FitTarget } from './types.ts';
export { evaluateFitReport } from './evaluate.ts';

/** Default cap on Levenberg-Marquardt iterations per start. */
export const DEFAULT_MAX_ITERATIONS = 300;
/** Two starts reached the same minimum when their χ² agree to this relative tolerance. */
const SAME_MINIMUM = 1e-6;

function refuseUnknown(model: DispersionModel, names: string[], option: string): void {
  const valid = model.parameters.map((p) => p.name);
  for (const name of names) {
    if (!valid.includes(name)) {
      throw new InputError(
        'unknown-parameter',
        `${optionRef(option)} ${name}: model ${model.spec} has no parameter "${name}"; its parameters: ${valid.join(', ')}`,
        {},
        { option, value: name },
      );
    }
  }
}

/** Bounds per parameter: the model's defaults unless overridden. */
function resolveBounds(model: DispersionModel, options: FitOptions): [number, number][] {
  return model.parameters.map((p) => {
    const b = options.bounds?.[p.name] ?? p.bounds;
    if (!(b[0] < b[1]))
      throw new InputError('bad-bounds', `${optionRef('bounds')} ${p.name}=${b[0]}:${b[1]}: the lower bound must be below the upper`);
    return b;
  });
}

/**
 * Start k ≥ 1: every free parameter multiplied by a log-uniform factor in [1/3, 3], kept within bounds and
 * inside the model's domain (its constraints, e.g. Tauc-Lorentz C < 2·E0): a draw that breaks one is drawn
 * again, up to DOMAIN_DRAWS times; null when none lands inside (the start is then skipped and counted).
 */
const DOMAIN_DRAWS = 50;
function perturbedStart(
  model: DispersionModel,
  start: Float64Array,
  free: number[],
  bounds: [number, number][],
  random: () => number,
): Float64Array | null {
  for (let draw = 0; draw < DOMAIN_DRAWS; draw++) {
    const p = Float64Array.from(start);
    for (const i of free) {
      const [lo, hi] = bounds[i];
      const v = p[i] === 0 ? lo + 0.1 * random() * (hi - lo) : p[i] * Math.exp((2 * random() - 1) * Math.log(3));
      p[i] = Math.min(hi, Math.max(lo, v));
    }
    if (!model.violated(p)) return p;
  }
  return null;
}

/**
 * Move an automatic start into the model's domain: a value that breaks `below < factor·above` is set to
 * 90 % of its limit (the guess rules estimate each parameter alone, so a broad peak can give C ≥ 2·E0).
 */
function intoDomain(model: DispersionModel, start: Float64Array, bounds: [number, number][], given: Map<number, number>): void {
  for (const c of model.constraints) {
    if (start[c.below] < c.factor * start[c.above]) continue;
    if (!given.has(c.below)) start[c.below] = Math.max(bounds[c.below][0], 0.9 * c.factor * start[c.above]);
    else if (!given.has(c.above)) start[c.above] = Math.min(bounds[c.above][1], (start[c.below] / c.factor) * 1.1);
  }
}

/** A fit ready to run: model, problem (rows, weights), bounds, start values and the free parameters. */
export interface PreparedFit {
  model: DispersionModel;
  problem: FitProblem;
  bounds: [number, number][];
  start: Float64Array;
  free: number[];
  fixed: Set<number>;
  target: FitOptions['target'] & string;
  maxIterations: number;
  startCount: number;
  seed: number;
  /** Rows of the table inside the range, and whether a range was given (for wording refusals). */
  rows: number;
  rangeGiven: boolean;
}

/** A finished fit: every start's result and the best one. */
export interface FitSolution extends PreparedFit {
  runs: LmResult[];
  best: LmResult;
  /** Starts that could not be run (no draw inside the model's domain, or a model not finite there). */
  skipped: number;
}

/**
 * fitTable in its three stages, exported so the benchmark (scripts/bench-fit.ts) can time the fit alone
 * like scipy's least_squares call: prepareFit (checks, rows, weights, start) → solveFit (the
 * minimizations) → reportFit (standard errors, correlations, statistics, warnings).
 */
export function fitTable(table: NkTable, options: FitOptions): FitReport {
  return reportFit(solveFit(prepareFit(table, options)));
}

export function prepareFit(table: NkTable, options: FitOptions): PreparedFit {
  const model = buildModel(options.model, { terms: options.terms, urbach: options.urbach });
  refuseUnknown(model, Object.keys(options.fix ?? {}), 'fix');
  refuseUnknown(model, Object.keys(options.init ?? {}), 'init');
  refuseUnknown(model, Object.keys(options.bounds ?? {}), 'bounds');
  refuseUnknown(model, options.free ?? [], 'free');
  const target = options.target ?? 'nk';
  const problem = buildProblem(table, target, { rangeNm: options.rangeNm, absorbing: model.absorbing, weights: options.weights });
  const bounds = resolveBounds(model, options);
  const names = model.parameters.map((p) => p.name);
  const given = new Map<number, number>();
  const fixed = new Set<number>();
  model.parameters.forEach((p, i) => {
    if (p.fixedByDefault && !options.free?.includes(p.name)) fixed.add(i);
    const init = options.init?.[p.name];
    if (init !== undefined) {
      if (init < bounds[i][0] || init > bounds[i][1])
        throw new InputError(
          'init-out-of-bounds',
          `${optionRef('init')} ${p.name}=${init} lies outside its bounds ${bounds[i][0]}:${bounds[i][1]} (${p.unit}); widen them with ${optionRef('bounds')}`,
        );
      given.set(i, init);
    }
    const fix = options.fix?.[p.name];
    if (fix !== undefined) {
      given.set(i, fix);
      fixed.add(i);
    }
  });
  const free = names.flatMap((_, i) => (fixed.has(i) ? [] : [i]));
  const rows = problem.grid.wavelengthNm.length;
  const points = problem.y.length;
  if (points <= free.length) {
    const where = options.rangeNm ? `the fit range ${options.rangeNm[0]}–${options.rangeNm[1]} nm keeps ${rows} rows` : `the table has ${rows} rows`;
    throw new InputError(
      'too-few-points',
      `${where}, ${points} residuals (${problem.useRe && problem.useIm ? 'two per row' : 'one per row'}), not more than the ${free.length} free parameters of ${model.spec}: the fit would have no degrees of freedom; ${options.rangeNm ? 'widen the range, ' : ''}fix parameters at known values or use a model with fewer parameters`,
    );
  }
  // the automatic guess only when some parameter still needs one
  const start = given.size === names.length ? Float64Array.from(names, (_, i) => given.get(i) as number) : model.guess(problem.data, given);
  for (const i of free) start[i] = Math.min(bounds[i][1], Math.max(bounds[i][0], start[i]));
  intoDomain(model, start, bounds, given);
  const broken = model.violated(start);
  if (broken) {
    const [a, b] = [model.parameters[broken.below].name, model.parameters[broken.above].name];
    throw new NumericalError(
      `the start values break the model's rule ${broken.rule} (${a} = ${start[broken.below]}, ${b} = ${start[broken.above]}): give values that satisfy it`,
      'start-outside-domain',
    );
  }
  const maxIterations = options.maxIterations ?? DEFAULT_MAX_ITERATIONS;
  const startCount = Math.max(1, Math.floor(options.starts ?? 1));
  return {
    model,
    problem,
    bounds,
    start,
    free,
    fixed,
    target,
    maxIterations,
    startCount,
    seed: options.seed ?? 1,
    rows,
    rangeGiven: options.rangeNm !== undefined,
  };
}

export function solveFit(prepared: PreparedFit): FitSolution {
  const { model, problem, start, free, bounds, maxIterations } = prepared;
  const random = seededRandom(prepared.seed);
  const runs: LmResult[] = [];
  let skipped = 0;
  const residuals = tableResiduals(problem, model);
  const nonFinite = (p: Float64Array) => nonFiniteMessage(model, p, 'at the start values');
  for (let s = 0; s < prepared.startCount; s++) {
    if (s === 0) {
      runs.push(minimizeWithBounds(residuals, start, free, bounds, maxIterations, nonFinite));
      continue;
    }
    // a perturbed start outside the model's domain or where it is not finite is skipped, never fatal
    const from = perturbedStart(model, start, free, bounds, random);
    if (!from) {
      skipped++;
      continue;
    }
    try {
      runs.push(minimizeWithBounds(residuals, from, free, bounds, maxIterations, nonFinite));
    } catch (err) {
      if (!(err instanceof NumericalError)) throw err;
      skipped++;
    }
  }
  const best = runs.reduce((a, b) => (b.chi2 < a.chi2 ? b : a));
  return { ...prepared, runs, best, skipped };
}

function difference(a: Float64Array, b: Float64Array): Float64Array {
  const out = new Float64Array(a.length);
  for (let i = 0; i < a.length; i++) out[i] = a[i] - b[i];
  return out;
}

/** A short number for messages. */
const short = (v: number) => String(+v.toPrecision(4));

/** p < this is "improbable" for the χ², runs and heteroscedasticity tests (one in a thousand correct fits warns). */
export const TEST_LEVEL = 1e-3;
/** |r| between two resonances' strengths above which they describe one resonance. */
export const DEGENERATE_CORRELATION = 0.999;

export function reportFit(solution: FitSolution): FitReport {
  const { model, problem, best } = solution;
  const ctx = solution;
  const names = model.parameters.map((p) => p.name);
  const points = problem.y.length;
  const freeNames = best.free.map((i) => names[i]);
  const atBound = new Set(best.atBound);
  let uncertaintyResult;
  try {
    uncertaintyResult = uncertainty(best.jacobian, freeNames, best.chi2, points);
  } catch (err) {
    if (err instanceof SingularCovariance) throw singularError(solution, err);
    throw err;
  }
  const { stderr, correlation } = uncertaintyResult;
  const nk = model.evaluate(problem.grid, best.values, 'nk', false);
  const diagnostics: FitDiagnostic[] = problem.warnings.map((message) => ({ rule: 'data', message }));
  if (!model.kkConsistent)
    diagnostics.push({
      rule: 'not-kk-consistent',
      message: `${model.spec} is not Kramers-Kronig consistent: its n and k are independent formulas, so they need not describe one physical material`,
    });
  const parameters: Record<string, ParameterReport> = {};
  model.parameters.forEach((spec, i) => {
    const j = best.free.indexOf(i);
    const [lo, hi] = ctx.bounds[i];
    const held = atBound.has(i);
    if (held) {
      const side = best.values[i] <= lo ? 'lower' : 'upper';
      diagnostics.push({
        rule: 'at-bound',
        message: `${spec.name} ended on its ${side} bound ${short(side === 'lower' ? lo : hi)}${spec.unit === '1' ? '' : ` ${spec.unit}`} (bounds ${short(lo)} to ${short(hi)}) with the data pulling it beyond: it has no standard error and is left out of the covariance of the others`,
        advice: `widen its bounds if the physics allows it, or fix ${spec.name} at a known value`,
        option: 'bounds',
        parameters: [spec.name],
        value: best.values[i],
      });
    }
    parameters[spec.name] = { value: best.values[i], stderr: j >= 0 ? stderr[j] : null, unit: spec.unit, at_bound: held };
  });
  const high: FitReport['correlations']['high'] = [];
  for (let a = 0; a < freeNames.length; a++) {
    for (let b = a + 1; b < freeNames.length; b++) {
      const r = correlation[a][b];
      if (Math.abs(r) > CORRELATION_THRESHOLD) high.push({ a: freeNames[a], b: freeNames[b], r });
    }
  }
  for (const d of degenerateResonances(model, freeNames, correlation, best.values)) diagnostics.push(d);
  if (high.length > 0)
    diagnostics.push({
      rule: 'correlated',
      message: `highly correlated (|r| > ${CORRELATION_THRESHOLD}): ${high.map((h) => `${h.a}/${h.b} r=${h.r.toFixed(3)}`).join(', ')}; their individual values are poorly determined`,
      parameters: [...new Set(high.flatMap((h) => [h.a, h.b]))],
    });
  if (!best.converged)
    diagnostics.push({
      rule: 'not-converged',
      message: `the fit stopped after ${best.iterations} iterations without meeting the convergence tests; the result may not be a minimum`,
      advice: 'start from other values or run several starts',
      option: 'starts',
    });
  const freeCount = best.free.length;
  const dof = points - freeCount;
  if (dof < 2 * freeCount) {
    diagnostics.push({
      rule: 'few-dof',
      message: `only ${points} residuals for ${freeCount} free parameters (${dof} degrees of freedom, fewer than twice the free parameters): the standard errors and χ² tests rest on little data`,
      advice: 'fit more rows or fix parameters at known values',
      option: 'fix',
      value: dof,
    });
  }
  const residuals = difference(
    Float64Array.from(problem.y, (y, i) => y * problem.invSigma[i]),
    whitenedModel(problem, model.evaluate(problem.grid, best.values, problem.quantity, false)).model,
  );
  let chi2P: number | null = null;
  if (problem.weighted) {
    chi2P = chi2Survival(best.chi2, dof);
    if (chi2P < TEST_LEVEL) {
      diagnostics.push({
        rule: 'poor-fit',
        message: `χ² = ${short(best.chi2)} for ${dof} degrees of freedom (reduced χ² ${short(best.chi2 / dof)}) is improbable if the model describes the data within their sigmas (p = ${chi2P.toExponential(1)}, χ² distribution)`,
        advice: 'the model misses something (another model, more terms, a narrower wavelength range) or the sigma columns are too small',
        value: best.chi2 / dof,
      });
    }
  }
  diagnostics.push(...residualTests(problem, residuals, nk));
  const warnings = diagnostics.map((d) => (d.advice ? `${d.message}; ${d.advice}` : d.message));
  const { aic, bic } = informationCriteria(best.chi2, points, freeCount);
  const report: FitReport = {
    model: model.spec,
    parameters,
    statistics: {
      points,
      rms_n: rms(difference(problem.data.n, nk.re)),
      rms_k: rms(difference(problem.data.k, nk.im)),
      reduced_chi2: problem.weighted ? best.chi2 / dof : null,
      chi2_p: chi2P,
      dof,
      aic,
      bic,
      iterations: best.iterations,
    },
    correlations: { threshold: CORRELATION_THRESHOLD, parameters: freeNames, matrix: correlation, high },
    warnings,
    diagnostics,
    kk_consistent: model.kkConsistent,
    range_nm: [problem.grid.wavelengthNm[0], problem.grid.wavelengthNm[problem.grid.wavelengthNm.length - 1]],
    options: {
      terms: model.options.terms,
      urbach: model.options.urbach,
      target: ctx.target,
      weighted: problem.weighted,
      fixed: names.filter((_, i) => ctx.fixed.has(i)),
      weights: problem.weighting,
    },
  };
  if (ctx.startCount > 1) {
    const reached = ctx.runs.filter((r) => r.chi2 <= best.chi2 * (1 + SAME_MINIMUM) + 1e-300).length;
    report.multistart = {
      starts: ctx.startCount,
      reached_best: reached,
      tolerance: `χ² within ${SAME_MINIMUM} relative of the best`,
      skipped: ctx.skipped,
    };
  }
  return report;
}

/** Two resonances of one term whose strengths move together (|r| ≥ DEGENERATE_CORRELATION): one resonance described twice. */
function degenerateResonances(model: DispersionModel, freeNames: string[], correlation: number[][], values: Float64Array): FitDiagnostic[] {
  const out: FitDiagnostic[] = [];
  const names = model.parameters.map((p) => p.name);
  const list = model.oscillators;
  for (let a = 0; a < list.length; a++) {
    for (let b = a + 1; b < list.length; b++) {
      if (list[a].group !== list[b].group) continue;
      const i = freeNames.indexOf(names[list[a].strength]);
      const j = freeNames.indexOf(names[list[b].strength]);
      if (i < 0 || j < 0 || !(Math.abs(correlation[i][j]) >= DEGENERATE_CORRELATION)) continue;
      const [sa, sb, pa, pb] = [list[a].strength, list[b].strength, list[a].position, list[b].position].map((k) => names[k]);
      out.push({
        rule: 'degenerate-terms',
        message: `two ${list[a].group} terms describe one resonance: ${sa} and ${sb} move together (r = ${correlation[i][j].toFixed(4)}; ${pa} = ${short(values[list[a].position])}, ${pb} = ${short(values[list[b].position])}), so the data determine only their combined effect`,
        advice: `use one term fewer, or fix ${pb} at a known resonance`,
        option: 'terms',
        parameters: [sa, sb, pa, pb],
      });
    }
  }
  return out;
}

/** Runs test on every fitted quantity; a heteroscedasticity test when the weights come from no sigma column. */
function residualTests(problem: FitProblem, residuals: Float64Array, nk: { re: Float64Array; im: Float64Array }): FitDiagnostic[] {
  const out: FitDiagnostic[] = [];
  const rows = problem.grid.wavelengthNm.length;
  const parts: [string, Float64Array][] = [];
  const eps = problem.quantity === 'eps';
  if (problem.useRe) parts.push([eps ? 'ε1' : 'n', eps ? problem.data.eps1 : problem.data.n]);
  if (problem.useIm) parts.push([eps ? 'ε2' : 'k', eps ? problem.data.eps2 : problem.data.k]);
  parts.forEach(([name, all], q) => {
    // k (ε2) rows within 3σ of zero are left out: import clips small negative k to 0, which makes the residuals
    // there one-sided and their scatter small without saying anything about the model
    const real = q === 0 && problem.useRe;
    const floor = real ? -Infinity : 3 * noiseFromSecondDifferences(all);
    const keep: number[] = [];
    for (let i = 0; i < rows; i++) if (real || all[i] > floor) keep.push(i);
    const r = Float64Array.from(keep, (i) => residuals[q * rows + i]);
    const values = Float64Array.from(keep, (i) => all[i]);
    const runs = runsTest(r);
    if (runs && runs.p < TEST_LEVEL) {
      out.push({
        rule: 'structured-residuals',
        message: `the ${name} residuals come in long stretches of one sign (${runs.runs} runs where about ${Math.round(runs.expected)} are expected at random; Wald–Wolfowitz runs test, p = ${runs.p.toExponential(1)}): the model misses a structure in the data`,
        advice: 'look at the residual plot; another model, more terms or a narrower wavelength range may describe the data',
      });
      return;
    }
    if (problem.weighting !== 'estimated') return;
    const bp = breuschPagan(r, values);
    if (bp && bp.p < TEST_LEVEL && bp.slope > 0) {
      out.push({
        rule: 'heteroscedastic',
        message: `the scatter of the ${name} residuals grows with ${name} (Breusch–Pagan test, Koenker form, p = ${bp.p.toExponential(1)}): the standard errors assume the same noise everywhere and are not reliable`,
        advice: 'weight the residuals relative to the value, or give sigma columns',
        option: 'weights',
      });
    }
  });
  return out;
}

/** The singular-covariance failure worded with what the fit knows: where it ended, bounds reached, vanished terms. */
function singularError(solution: FitSolution, err: SingularCovariance): NumericalError {
  const { model, best } = solution;
  const names = model.parameters.map((p) => p.name);
  const value = (name: string) => `${name} = ${short(best.values[names.indexOf(name)])}`;
  const list = err.parameters.map(value).join(', ');
  // a resonance whose strength went to its lower bound (0): its other parameters no longer matter
  const vanished = model.oscillators.filter((o) => best.values[o.strength] <= solution.bounds[o.strength][0]);
  if (vanished.length > 0) {
    const v = vanished.map((o) => `${names[o.strength]} = ${short(best.values[o.strength])}`).join(', ');
    return new NumericalError(
      `a ${vanished[0].group} term vanished (${v}, its lower bound), so the model no longer depends on ${list}: fit with one term fewer, or start that term nearer a feature of the data`,
      'term-vanished',
    );
  }
  const held = best.atBound.map((i) => `${names[i]} = ${short(best.values[i])}`);
  if (held.length > 0) {
    return new NumericalError(
      `the fit ended with ${held.join(', ')} on ${held.length > 1 ? 'their bounds' : 'its bound'} (χ² = ${short(best.chi2)}), probably far from a description of the data; there ${list} cannot be determined${err.kind === 'degenerate' ? ' separately' : ''}: give start values near the expected ones, or run several starts`,
      'fit-ended-on-bounds',
    );
  }
  return new NumericalError(
    err.kind === 'dead'
      ? `the data do not depend on ${list} at the optimum: fix ${err.parameters.length > 1 ? 'them' : 'it'} at a known value`
      : `${list} cannot be determined separately by these data: fix one of them at a known value, or use fewer terms`,
    err.kind === 'dead' ? 'parameter-undetermined' : 'parameters-degenerate',
  );
}
