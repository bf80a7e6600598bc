/**
 * Fit options as people type them — `nkledger fit` and `nkledger import --fit` flags, and the HTTP API's fit fields —
 * turned into the fitter's FitOptions. One parser, so every front door accepts and refuses the same things.
 */
import { InputError, optionRef } from '../errors.ts';
import { parseOptionNumber } from '../io/numbers.ts';
import type { FitOptions, FitTarget } from '../fit/types.ts';
import type { OptionSpec } from '../io/option-spec.ts';

export const FIT_TARGETS: readonly FitTarget[] = ['nk', 'n', 'k', 'eps'];

/** The fit options as text: single values, and lists for the repeatable ones (P=V, P=LO:HI, P). */
export interface FitOptionText {
  terms?: string;
  urbach?: boolean;
  target?: string;
  /** "MIN:MAX" in nm. */
  range?: string;
  fix?: string[];
  init?: string[];
  bounds?: string[];
  free?: string[];
  starts?: string;
  seed?: string;
  /** auto (sigma columns, else the estimated n/k noise ratio) or relative (σ ∝ |value|). */
  weights?: string;
}

export const FIT_WEIGHTS = ['auto', 'relative'] as const;

export type FitOptionName = keyof FitOptionText;

/**
 * The fit options, once: the flags of `nkledger fit` and `nkledger import --fit` (cli/fit-options.ts), the fit
 * fields of the API's uploads and POST /fit with their OpenAPI entries (api/fit-fields.ts), parsed by
 * parseFitOptions below. A new option: a row here, its FitOptionText member and its case in parseFitOptions.
 */
export const FIT_OPTIONS: readonly (OptionSpec & { name: FitOptionName })[] = [
  { name: 'terms', argument: '<N>', description: 'number of Sellmeier terms / oscillators for models that accept it' },
  { name: 'urbach', description: 'Cauchy: add the Urbach absorption tail' },
  { name: 'target', argument: '<what>', description: `quantities fitted: ${FIT_TARGETS.join(', ')} (default nk: n and k; eps: ε1 and ε2)` },
  { name: 'range', field: 'range_nm', argument: '<min:max>', description: 'fit only wavelengths in this window (nm)' },
  { name: 'fix', argument: '<P=V>', repeatable: true, description: 'hold parameter P fixed at V (repeatable)' },
  { name: 'init', argument: '<P=V>', repeatable: true, description: 'start parameter P at V instead of the automatic guess (repeatable)' },
  { name: 'bounds', argument: '<P=LO:HI>', repeatable: true, description: 'bounds of parameter P (repeatable)' },
  {
    name: 'free',
    argument: '<P>',
    repeatable: true,
    description: 'fit a parameter the model fixes by default (Sellmeier A, Urbach Eb) (repeatable)',
  },
  {
    name: 'starts',
    argument: '<N>',
    description: 'number of starts: the automatic guess plus N − 1 random perturbations of it (default 1)',
  },
  { name: 'seed', argument: '<N>', description: 'seed of the multi-start perturbations (default 1)' },
  {
    name: 'weights',
    argument: '<how>',
    description:
      'auto (default: the sigma columns, else the n/k noise ratio) or relative (σ ∝ |value|, for noise that grows with the value; see docs/fitting.md)',
  },
];
export const FIT_OPTION_NAMES: readonly FitOptionName[] = FIT_OPTIONS.map((o) => o.name);

/** How a front door names an option in messages: `--fix` on the command line, `fix` or `range_nm` in the API. */
export type OptionLabel = (name: FitOptionName) => string;
const neutralLabel: OptionLabel = optionRef;

const number = (text: string, what: string) => parseOptionNumber(text, what);
const integer = (text: string, what: string, min: number, max: number) => parseOptionNumber(text, what, { integer: true, min, max });

/** "P=V" → [P, V] */
function assignment(text: string, what: string): [string, string] {
  const at = text.indexOf('=');
  if (at <= 0) throw new InputError('bad-option', `${what} ${text}: expected NAME=VALUE`);
  return [text.slice(0, at).trim(), text.slice(at + 1).trim()];
}

/** "LO:HI" → [lo, hi] */
function interval(text: string, what: string): [number, number] {
  const parts = text.split(':');
  if (parts.length !== 2) throw new InputError('bad-option', `${what} ${text}: expected MIN:MAX`);
  const [lo, hi] = parts.map((p) => number(p, what));
  if (!(lo < hi)) throw new InputError('bad-option', `${what} ${text}: MIN must be below MAX`);
  return [lo, hi];
}

function numberMap<T>(items: string[], what: string, value: (text: string, what: string) => T): Record<string, T> {
  return Object.fromEntries(items.map((t) => assignment(t, what)).map(([k, v]) => [k, value(v, `${what} ${k}`)]));
}

/** Turn the text of the fit options into FitOptions (without the model); refusals name the option as `label` spells it. */
export function parseFitOptions(text: FitOptionText, label: OptionLabel = neutralLabel): Omit<FitOptions, 'model'> {
  const out: Omit<FitOptions, 'model'> = {};
  if (text.terms !== undefined) out.terms = integer(text.terms, label('terms'), 1, 100);
  if (text.urbach) out.urbach = true;
  if (text.target !== undefined) {
    if (!FIT_TARGETS.includes(text.target as FitTarget))
      throw new InputError('bad-option', `${label('target')} ${text.target}: expected one of ${FIT_TARGETS.join(', ')}`);
    out.target = text.target as FitTarget;
  }
  if (text.range !== undefined) out.rangeNm = interval(text.range, label('range'));
  if (text.fix?.length) out.fix = numberMap(text.fix, label('fix'), number);
  if (text.init?.length) out.init = numberMap(text.init, label('init'), number);
  if (text.bounds?.length) out.bounds = numberMap(text.bounds, label('bounds'), interval);
  if (text.free?.length) out.free = text.free.map((p) => p.trim());
  if (text.starts !== undefined) out.starts = integer(text.starts, label('starts'), 1, 1000);
  if (text.seed !== undefined) out.seed = number(text.seed, label('seed'));
  if (text.weights !== undefined) {
    if (!(FIT_WEIGHTS as readonly string[]).includes(text.weights))
      throw new InputError('bad-option', `${label('weights')} ${text.weights}: expected one of ${FIT_WEIGHTS.join(', ')}`);
    out.weights = text.weights as (typeof FIT_WEIGHTS)[number];
  }
  return out;
}

/** The options of FitOptionText that were given (for refusing them when no model is asked for). */
export function givenFitOptions(text: FitOptionText): FitOptionName[] {
  return FIT_OPTION_NAMES.filter((k) => {
    const v = text[k];
    return Array.isArray(v) ? v.length > 0 : v !== undefined && v !== false;
  });
}
