/**
 * Fit a dispersion model to a measured n,k table: automatic start, optional multi-start, bounded
 * Levenberg-Marquardt (lm.ts), standard errors and correlations (statistics.ts), a plain-JSON report.
 * Pure: no I/O.
 */
import { InputError } from '../errors.ts';
import { buildModel, type DispersionModel } from '../models/catalogue.ts';
import type { NkTable } from '../table.ts';
import { minimize, type LmResult } from './lm.ts';
import { buildProblem, type FitProblem } from './problem.ts';
import { CORRELATION_THRESHOLD, informationCriteria, rms, uncertainty } from './statistics.ts';
import type { FitOptions, FitReport, ParameterReport } from './types.ts';

export type { FitOptions, FitReport, FitTarget } from './types.ts';

/** Default cap on Levenberg-Marquardt iterations per start. */
export const DEFAULT_MAX_ITERATIONS = 300;
/** Two starts reached the same minimum when their χ² agree to this relative tolerance. */
const SAME_MINIMUM = 1e-6;

function refuseUnknown(model: DispersionModel, names: string[], flag: string): void {
  const valid = model.parameters.map((p) => p.name);
  for (const name of names) {
    if (!valid.includes(name)) {
      throw new InputError('unknown-parameter', `${flag} ${name}: model ${model.spec} has no parameter "${name}"; its parameters: ${valid.join(', ')}`);
    }
  }
}

/** Bounds per parameter: the model's defaults unless overridden. */
function resolveBounds(model: DispersionModel, options: FitOptions): [number, number][] {
  return model.parameters.map((p) => {
    const b = options.bounds?.[p.name] ?? p.bounds;
    if (!(b[0] < b[1])) throw new InputError('bad-bounds', `--bounds ${p.name}=${b[0]}:${b[1]}: the lower bound must be below the upper`);
    return b;
  });
}

/** A small seeded generator (mulberry32, common practice) so multi-start runs are reproducible. */
function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Start k ≥ 1: every free parameter multiplied by a log-uniform factor in [1/3, 3], kept within bounds. */
function perturbedStart(start: Float64Array, free: number[], bounds: [number, number][], random: () => number): Float64Array {
  const p = Float64Array.from(start);
  for (const i of free) {
    const [lo, hi] = bounds[i];
    const v = p[i] === 0 ? lo + 0.1 * random() * (hi - lo) : p[i] * Math.exp((2 * random() - 1) * Math.log(3));
    p[i] = Math.min(hi, Math.max(lo, v));
  }
  return p;
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
}

/** A finished fit: every start's result and the best one. */
export interface FitSolution extends PreparedFit {
  runs: LmResult[];
  best: LmResult;
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
  refuseUnknown(model, Object.keys(options.fix ?? {}), '--fix');
  refuseUnknown(model, Object.keys(options.init ?? {}), '--init');
  refuseUnknown(model, Object.keys(options.bounds ?? {}), '--bounds');
  refuseUnknown(model, options.free ?? [], '--free');
  const target = options.target ?? 'nk';
  const problem = buildProblem(table, target, options.rangeNm);
  const bounds = resolveBounds(model, options);
  const names = model.parameters.map((p) => p.name);
  const given = new Map<number, number>();
  const fixed = new Set<number>();
  model.parameters.forEach((p, i) => {
    if (p.fixedByDefault && !options.free?.includes(p.name)) fixed.add(i);
    const init = options.init?.[p.name];
    if (init !== undefined) {
      if (init < bounds[i][0] || init > bounds[i][1]) throw new InputError('init-out-of-bounds', `--init ${p.name}=${init} lies outside its bounds ${bounds[i][0]}:${bounds[i][1]} (${p.unit}); widen them with --bounds`);
      given.set(i, init);
    }
    const fix = options.fix?.[p.name];
    if (fix !== undefined) {
      given.set(i, fix);
      fixed.add(i);
    }
  });
  const free = names.flatMap((_, i) => (fixed.has(i) ? [] : [i]));
  // the automatic guess only when some parameter still needs one
  const start = given.size === names.length ? Float64Array.from(names, (_, i) => given.get(i) as number) : model.guess(problem.data, given);
  for (const i of free) start[i] = Math.min(bounds[i][1], Math.max(bounds[i][0], start[i]));
  const maxIterations = options.maxIterations ?? DEFAULT_MAX_ITERATIONS;
  const startCount = Math.max(1, Math.floor(options.starts ?? 1));
  return { model, problem, bounds, start, free, fixed, target, maxIterations, startCount, seed: options.seed ?? 1 };
}

export function solveFit(prepared: PreparedFit): FitSolution {
  const { model, problem, start, free, bounds, maxIterations } = prepared;
  const random = seededRandom(prepared.seed);
  const runs: LmResult[] = [];
  for (let s = 0; s < prepared.startCount; s++) {
    const from = s === 0 ? start : perturbedStart(start, free, bounds, random);
    runs.push(minimize(problem, model, from, free, bounds, maxIterations));
  }
  const best = runs.reduce((a, b) => (b.chi2 < a.chi2 ? b : a));
  return { ...prepared, runs, best };
}

function difference(a: Float64Array, b: Float64Array): Float64Array {
  const out = new Float64Array(a.length);
  for (let i = 0; i < a.length; i++) out[i] = a[i] - b[i];
  return out;
}

export function reportFit(solution: FitSolution): FitReport {
  const { model, problem, best } = solution;
  const ctx = solution;
  const names = model.parameters.map((p) => p.name);
  const points = problem.y.length;
  const freeNames = ctx.free.map((i) => names[i]);
  const { stderr, correlation } = uncertainty(best.jacobian, freeNames, best.chi2, points);
  const nk = model.evaluate(problem.grid, best.values, 'nk', false);
  const warnings = [...problem.warnings];
  if (!model.kkConsistent) warnings.push(`${model.spec} is not Kramers-Kronig consistent: its n and k are independent formulas, so they need not describe one physical material`);
  const parameters: Record<string, ParameterReport> = {};
  model.parameters.forEach((spec, i) => {
    const j = ctx.free.indexOf(i);
    const [lo, hi] = ctx.bounds[i];
    const slack = 1e-8 * (hi - lo);
    const atBound = j >= 0 && (best.values[i] <= lo + slack || best.values[i] >= hi - slack);
    if (atBound) warnings.push(`${spec.name} = ${best.values[i]} ${spec.unit} sits at its bound ${lo}:${hi}; its standard error is not meaningful (widen --bounds or --fix it)`);
    parameters[spec.name] = { value: best.values[i], stderr: j >= 0 ? stderr[j] : null, unit: spec.unit, at_bound: atBound };
  });
  const high: FitReport['correlations']['high'] = [];
  for (let a = 0; a < freeNames.length; a++) {
    for (let b = a + 1; b < freeNames.length; b++) {
      const r = correlation[a][b];
      if (Math.abs(r) > CORRELATION_THRESHOLD) high.push({ a: freeNames[a], b: freeNames[b], r });
    }
  }
  if (high.length > 0) warnings.push(`highly correlated (|r| > ${CORRELATION_THRESHOLD}): ${high.map((h) => `${h.a}/${h.b} r=${h.r.toFixed(3)}`).join(', ')}; their individual values are poorly determined`);
  if (!best.converged) warnings.push(`the fit stopped after ${best.iterations} iterations without meeting the convergence tests; the result may not be a minimum`);
  const dof = points - ctx.free.length;
  const { aic, bic } = informationCriteria(best.chi2, points, ctx.free.length);
  const report: FitReport = {
    model: model.spec,
    parameters,
    statistics: {
      points,
      rms_n: rms(difference(problem.data.n, nk.re)),
      rms_k: rms(difference(problem.data.k, nk.im)),
      reduced_chi2: problem.weighted ? best.chi2 / dof : null,
      aic,
      bic,
      iterations: best.iterations,
    },
    correlations: { threshold: CORRELATION_THRESHOLD, parameters: freeNames, matrix: correlation, high },
    warnings,
    kk_consistent: model.kkConsistent,
    range_nm: [problem.grid.wavelengthNm[0], problem.grid.wavelengthNm[problem.grid.wavelengthNm.length - 1]],
    options: { terms: model.options.terms, urbach: model.options.urbach, target: ctx.target, weighted: problem.weighted, fixed: names.filter((_, i) => ctx.fixed.has(i)) },
  };
  if (ctx.runs.length > 1) {
    const reached = ctx.runs.filter((r) => r.chi2 <= best.chi2 * (1 + SAME_MINIMUM) + 1e-300).length;
    report.multistart = { starts: ctx.runs.length, reached_best: reached, tolerance: `χ² within ${SAME_MINIMUM} relative of the best` };
  }
  return report;
}

/** n and k of a fitted model at the given wavelengths (nm). Outside report.range_nm the model is extrapolated. */
export function evaluateFitReport(report: FitReport, wavelengthsNm: number[]): { n: number[]; k: number[] } {
  const model = buildModel(report.model, { terms: report.options.terms, urbach: report.options.urbach });
  const values = Object.fromEntries(Object.entries(report.parameters).map(([name, p]) => [name, p.value]));
  return model.nk(wavelengthsNm, values);
}
