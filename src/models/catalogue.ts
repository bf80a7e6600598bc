/**
 * The model catalogue: every dispersion model nkledger knows, and `buildModel`, which turns a spec such as
 * "tauc-lorentz" or "tauc-lorentz+drude" into a `DispersionModel`. Terms marked summable add in ε and share
 * one eps_inf; in a sum every parameter is prefixed by its term ("tauc-lorentz.A", "drude.Ep").
 * Fitter, CLI help and API enumerate MODEL_CATALOGUE; nothing outside src/models switches on model names.
 */
import { InputError, optionRef } from '../errors.ts';
import { HC_EV_NM } from '../optics/units.ts';
import { cauchy } from './cauchy.ts';
import { drude } from './drude.ts';
import { clamp, spectralGrid } from './grid.ts';
import { lorentz } from './lorentz.ts';
import { sellmeier } from './sellmeier.ts';
import { taucLorentz } from './tauc-lorentz.ts';
import type { GuessData, ModelTerm, ParameterSpec, SpectralGrid, TermOptions, TermOutput } from './types.ts';

export type { GuessData, ModelTerm, ParameterSpec, SpectralGrid } from './types.ts';

export const MODEL_CATALOGUE: ModelTerm[] = [cauchy, sellmeier, taucLorentz, lorentz, drude];

/** Options a user may set on a model: oscillator / Sellmeier term count, Cauchy Urbach tail. */
export interface ModelOptions {
  terms?: number;
  urbach?: boolean;
}

/** Quantity pair a model is evaluated as: n,k or ε1,ε2. */
export type ModelQuantity = 'nk' | 'eps';

/** Values (re = n or ε1, im = k or ε2) and, on request, their partial derivatives per parameter. */
export interface ModelValues {
  re: Float64Array;
  im: Float64Array;
  dRe?: Float64Array[];
  dIm?: Float64Array[];
}

/**
 * Derivatives evaluate() computes: all (true), none (false), or only the listed parameter columns of the
 * listed parts (the fitter asks for its free parameters and the fitted quantities only). Entries of
 * dRe/dIm outside the request are unspecified (a shared scratch array).
 */
export interface DerivativeRequest {
  columns: number[];
  re: boolean;
  im: boolean;
}

export interface DispersionModel {
  /** Normalized spec, e.g. "tauc-lorentz+drude". */
  spec: string;
  /** Options the model was built with (needed to rebuild it from a report). */
  options: { terms: number; urbach: boolean };
  parameters: ParameterSpec[];
  kkConsistent: boolean;
  /** False when k ≡ 0 for every parameter value (every term non-absorbing): the fitter then fits n alone. */
  absorbing: boolean;
  /** Domain couplings between parameters in full parameter order: values[below] < factor·values[above]. */
  constraints: ModelConstraint[];
  /** Resonances in full parameter order, grouped by term (`group` = the term's name). */
  oscillators: { group: string; strength: number; position: number }[];
  /** The first constraint the values break, if any. */
  violated(values: ArrayLike<number>): ModelConstraint | undefined;
  /** Validity notes and caveats, one sentence each. */
  notes: string[];
  eps(energyEv: number[], p: Record<string, number>): { eps1: number[]; eps2: number[] };
  nk(wavelengthNm: number[], p: Record<string, number>): { n: number[]; k: number[] };
  /** Fitter entry point: values in parameter order on a precomputed grid, with derivatives on request. */
  evaluate(grid: SpectralGrid, values: Float64Array, quantity: ModelQuantity, derivatives: boolean | DerivativeRequest): ModelValues;
  /** Automatic initial guess from the data; `given` holds user-set values (fixed or --init) by parameter index. */
  guess(data: GuessData, given?: Map<number, number>): Float64Array;
}

const EPS_INF: ParameterSpec = {
  name: 'eps_inf',
  unit: '1',
  meaning: 'high-frequency dielectric constant (transitions above the fitted range)',
  bounds: [0, 50],
  guessRule: 'linear least squares of ε on eps_inf and the oscillator amplitudes',
};

/** A ParameterConstraint of a term placed in the full parameter list, with its names for messages. */
export interface ModelConstraint {
  below: number;
  above: number;
  factor: number;
  /** e.g. "C < 2·E0" */
  rule: string;
}

export function modelNames(): string[] {
  return MODEL_CATALOGUE.map((t) => t.name);
}

function findTerm(name: string): ModelTerm {
  const term = MODEL_CATALOGUE.find((t) => t.name === name);
  if (!term) {
    throw new InputError(
      'unknown-model',
      `unknown model "${name}"; valid models: ${modelNames().join(', ')} (sum summable ones with "+", e.g. tauc-lorentz+drude)`,
    );
  }
  return term;
}

interface Slot {
  term: ModelTerm;
  offset: number;
  count: number;
}

export function buildModel(spec: string, options: ModelOptions = {}): DispersionModel {
  const names = spec.split('+').map((s) => s.trim().toLowerCase());
  const terms = names.map(findTerm);
  if (new Set(names).size !== names.length) {
    throw new InputError('duplicate-model-term', `model "${spec}" repeats a term; use ${optionRef('terms')} N for several oscillators of one kind`);
  }
  if (terms.length > 1) {
    const lone = terms.find((t) => !t.summable);
    if (lone) {
      const summable = MODEL_CATALOGUE.filter((t) => t.summable).map((t) => t.name);
      throw new InputError('model-not-summable', `model "${lone.name}" stands alone and cannot be summed; summable models: ${summable.join(', ')}`);
    }
  }
  const termCapable = terms.filter((t) => t.terms);
  if (options.terms !== undefined) {
    // terms = 1 is every model's natural form, so a report's options rebuild any model
    if (termCapable.length === 0 && options.terms !== 1)
      throw new InputError(
        'terms-not-supported',
        `${optionRef('terms')} does not apply to "${spec}"; it applies to ${MODEL_CATALOGUE.filter((t) => t.terms)
          .map((t) => t.name)
          .join(', ')}`,
      );
    for (const t of termCapable) {
      const range = t.terms!;
      if (!Number.isInteger(options.terms) || options.terms < range.min || options.terms > range.max) {
        throw new InputError(
          'terms-out-of-range',
          `${optionRef('terms')} for ${t.name} must be an integer ${range.min}–${range.max} (${range.meaning}), got ${options.terms}`,
        );
      }
    }
  }
  if (options.urbach && !terms.some((t) => t.urbach)) {
    throw new InputError(
      'urbach-not-supported',
      `${optionRef('urbach')} applies to ${MODEL_CATALOGUE.filter((t) => t.urbach)
        .map((t) => t.name)
        .join(', ')} only`,
    );
  }
  const termOptions: TermOptions = { terms: options.terms ?? 1, urbach: options.urbach ?? false };
  const prefix = terms.length > 1;
  const parameters: ParameterSpec[] = [];
  const slots: Slot[] = [];
  for (const term of terms) {
    const own = term.parameters(termOptions);
    slots.push({ term, offset: parameters.length, count: own.length });
    for (const p of own) parameters.push(prefix ? { ...p, name: `${term.name}.${p.name}` } : p);
  }
  const epsInfIndex = terms.some((t) => t.usesEpsInf) ? parameters.push(EPS_INF) - 1 : -1;
  const quantity = terms[0].quantity;
  const kkConsistent = terms.every((t) => t.kkConsistent);
  const absorbing = terms.some((t) => t.absorbing(termOptions));
  const constraints: ModelConstraint[] = slots.flatMap((slot) =>
    (slot.term.constraints?.(termOptions) ?? []).map((c) => {
      const below = slot.offset + c.below;
      const above = slot.offset + c.above;
      return { below, above, factor: c.factor, rule: `${parameters[below].name} < ${c.factor === 1 ? '' : `${c.factor}·`}${parameters[above].name}` };
    }),
  );
  const oscillators = slots.flatMap((slot) =>
    (slot.term.oscillators?.(termOptions) ?? []).map((o) => ({
      group: slot.term.name,
      strength: slot.offset + o.strength,
      position: slot.offset + o.position,
    })),
  );
  const violated = (values: ArrayLike<number>) => constraints.find((c) => !(values[c.below] < c.factor * values[c.above]));
  const notes = terms.flatMap((t) => t.validity);

  const all = parameters.map((_, i) => i);

  /** The terms' own output; derivative arrays only for `columns` (the others share one scratch array the terms write into). */
  function raw(grid: SpectralGrid, values: Float64Array, columns: number[] | undefined): ModelValues {
    const count = grid.wavelengthNm.length;
    const out: TermOutput = { re: new Float64Array(count), im: new Float64Array(count) };
    let dRe: Float64Array[] | undefined;
    let dIm: Float64Array[] | undefined;
    if (columns) {
      const scratch = columns.length < parameters.length ? new Float64Array(count) : undefined;
      dRe = parameters.map(() => scratch as Float64Array);
      dIm = parameters.map(() => scratch as Float64Array);
      for (const j of columns) {
        dRe[j] = new Float64Array(count);
        dIm[j] = new Float64Array(count);
      }
    }
    if (epsInfIndex >= 0) {
      out.re.fill(values[epsInfIndex]);
      if (dRe) dRe[epsInfIndex].fill(1);
    }
    for (const slot of slots) {
      if (dRe && dIm) {
        out.dRe = dRe.slice(slot.offset, slot.offset + slot.count);
        out.dIm = dIm.slice(slot.offset, slot.offset + slot.count);
      }
      slot.term.evaluate(grid, values.subarray(slot.offset, slot.offset + slot.count), termOptions, out);
    }
    return { re: out.re, im: out.im, dRe, dIm };
  }

  function evaluate(grid: SpectralGrid, values: Float64Array, want: ModelQuantity, derivatives: boolean | DerivativeRequest): ModelValues {
    const request = derivatives === true ? { columns: all, re: true, im: true } : derivatives === false ? undefined : derivatives;
    const v = raw(grid, values, request?.columns);
    return want === quantity ? v : convert(v, want, request);
  }

  function valuesFrom(p: Record<string, number>): Float64Array {
    return Float64Array.from(
      parameters.map((spec) => {
        const value = p[spec.name];
        if (typeof value !== 'number' || !Number.isFinite(value)) {
          throw new InputError(
            'missing-parameter',
            `model ${names.join('+')} needs parameter ${spec.name}; parameters: ${parameters.map((q) => q.name).join(', ')}`,
          );
        }
        return value;
      }),
    );
  }

  function guess(data: GuessData, given = new Map<number, number>()): Float64Array {
    const values = new Float64Array(parameters.length);
    for (const slot of slots) values.set(slot.term.guess(data, termOptions), slot.offset);
    if (epsInfIndex >= 0) values[epsInfIndex] = 1;
    for (const [index, value] of given) values[index] = value;
    if (quantity === 'eps' && epsInfIndex >= 0) solveAmplitudes(data, values, given);
    return values;
  }

  /**
   * Re-solve eps_inf and every amplitude (ε linear in A, or in Ep²) by linear least squares on ε1 and ε2,
   * the nonlinear parameters held at their guesses; amplitudes that come out ≤ 0 keep a tenth of the
   * term's own guess and the rest are re-solved (a small active-set loop).
   */
  function solveAmplitudes(data: GuessData, values: Float64Array, given: Map<number, number>): void {
    const grid: SpectralGrid = data;
    const free = slots.flatMap((slot) =>
      (slot.term.amplitudes?.(termOptions) ?? [])
        .map((a) => ({ index: slot.offset + a.index, power: a.power, slot }))
        .filter((a) => !given.has(a.index)),
    );
    const solveInf = !given.has(epsInfIndex);
    for (let round = 0; round <= free.length; round++) {
      const fixedPart = Float64Array.from(values);
      for (const a of free) fixedPart[a.index] = 0;
      if (solveInf) fixedPart[epsInfIndex] = 0;
      const base = raw(grid, fixedPart, undefined);
      const columns = free.map((a) => {
        const unit = Float64Array.from(fixedPart);
        unit[a.index] = 1;
        const v = raw(grid, unit, undefined);
        return [...v.re.map((x, i) => x - base.re[i]), ...v.im.map((x, i) => x - base.im[i])];
      });
      if (solveInf) columns.push([...data.eps1.map(() => 1), ...data.eps2.map(() => 0)]);
      const y = [...data.eps1.map((x, i) => x - base.re[i]), ...data.eps2.map((x, i) => x - base.im[i])];
      const coefficients = data.leastSquares(columns, y);
      const negative = free.findIndex((_, j) => !(coefficients[j] > 0));
      free.forEach((a, j) => {
        if (coefficients[j] > 0) values[a.index] = clamp(a.power === 2 ? Math.sqrt(coefficients[j]) : coefficients[j], parameters[a.index].bounds);
      });
      if (solveInf) values[epsInfIndex] = clamp(coefficients[free.length], EPS_INF.bounds);
      if (negative < 0) return;
      const dropped = free.splice(negative, 1)[0];
      const own = dropped.slot.term.guess(data, termOptions)[dropped.index - dropped.slot.offset];
      values[dropped.index] = clamp(0.1 * own, parameters[dropped.index].bounds);
    }
  }

  return {
    spec: names.join('+'),
    options: termOptions,
    parameters,
    kkConsistent,
    absorbing,
    constraints,
    oscillators,
    violated,
    notes,
    evaluate,
    guess,
    eps(energyEv, p) {
      const v = evaluate(spectralGrid(energyEv.map((e) => HC_EV_NM / e)), valuesFrom(p), 'eps', false);
      return { eps1: Array.from(v.re), eps2: Array.from(v.im) };
    },
    nk(wavelengthNm, p) {
      const v = evaluate(spectralGrid(wavelengthNm), valuesFrom(p), 'nk', false);
      return { n: Array.from(v.re), k: Array.from(v.im) };
    },
  };
}

/**
 * ε ↔ N = n + ik with derivatives. ε → N: N = √ε (stable principal root), ∂N = ∂ε/(2N);
 * N → ε: ε = N², ∂ε = 2N·∂N (complex arithmetic, common practice).
 */
function convert(v: ModelValues, to: ModelQuantity, request: DerivativeRequest | undefined): ModelValues {
  const count = v.re.length;
  const re = new Float64Array(count);
  const im = new Float64Array(count);
  const withDerivatives = request !== undefined && v.dRe !== undefined && v.dIm !== undefined;
  // complex factor f with ∂out = f·∂in, per point
  const fr = withDerivatives ? new Float64Array(count) : undefined;
  const fi = withDerivatives ? new Float64Array(count) : undefined;
  for (let i = 0; i < count; i++) {
    let a: number;
    let b: number;
    if (to === 'nk') {
      const mod = Math.sqrt(v.re[i] * v.re[i] + v.im[i] * v.im[i]); // |ε|; Math.hypot is several times slower in V8
      let n = Math.sqrt((mod + v.re[i]) / 2);
      let k: number;
      if (v.re[i] >= 0) k = n === 0 ? 0 : v.im[i] / (2 * n);
      else {
        k = Math.sqrt((mod - v.re[i]) / 2) * (v.im[i] < 0 ? -1 : 1);
        n = v.im[i] / (2 * k);
      }
      re[i] = n;
      im[i] = k;
      // 1/(2N) = (n − ik)/(2|N|²)
      const m2 = 2 * (n * n + k * k);
      a = n / m2;
      b = -k / m2;
    } else {
      const n = v.re[i];
      const k = v.im[i];
      re[i] = n * n - k * k;
      im[i] = 2 * n * k;
      a = 2 * n;
      b = 2 * k;
    }
    if (fr && fi) {
      fr[i] = a;
      fi[i] = b;
    }
  }
  if (!(withDerivatives && fr && fi && v.dRe && v.dIm && request)) return { re, im };
  // derivatives column by column (contiguous), only the requested columns and parts; the others share a scratch array
  const scratch = request.columns.length < v.dRe.length || !request.re || !request.im ? new Float64Array(count) : undefined;
  const dRe = v.dRe.map(() => scratch as Float64Array);
  const dIm = v.dIm.map(() => scratch as Float64Array);
  for (const j of request.columns) {
    const inRe = v.dRe[j];
    const inIm = v.dIm[j];
    if (request.re) {
      const out = (dRe[j] = new Float64Array(count));
      for (let i = 0; i < count; i++) out[i] = fr[i] * inRe[i] - fi[i] * inIm[i];
    }
    if (request.im) {
      const out = (dIm[j] = new Float64Array(count));
      for (let i = 0; i < count; i++) out[i] = fr[i] * inIm[i] + fi[i] * inRe[i];
    }
  }
  return { re, im, dRe, dIm };
}
