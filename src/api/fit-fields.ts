/**
 * The fit options as HTTP fields (upload of a version with `fit=MODEL`, and the stateless POST /fit): spelled as
 * the CLI flags of `nkledger fit`, except `range_nm` for --range; the repeatable ones take comma-separated lists
 * (`fix=A=1,Eb=4`, `bounds=C=0.1:5`, `free=A`). Parsed by the service layer's parseFitOptions, as the CLI's are.
 */
import { z } from 'zod';
import type { FitOptions } from '../fit/types.ts';
import { parseFitOptions, type FitOptionName } from '../service/fit-options.ts';

/** What each fit field means, for the OpenAPI document (the CLI flag it mirrors in brackets). */
const FIT_OPTION_FIELD_DOCS = {
  terms: 'Sellmeier terms or oscillators, e.g. 3 (--terms)',
  urbach: 'true: Cauchy with the Urbach absorption tail (--urbach)',
  target: 'quantities fitted: nk (default), n, k or eps (--target)',
  range_nm: 'fit only this window, MIN:MAX in nm, e.g. 250:1700 (--range)',
  fix: 'parameters held fixed, P=V[,P=V...], e.g. A=1,Eb=4 (--fix)',
  init: 'start values replacing the automatic guess, P=V[,P=V...] (--init)',
  bounds: 'bounds, P=LO:HI[,P=LO:HI...], e.g. C=0.1:5 (--bounds)',
  free: 'parameters the model fixes by default to fit anyway, P[,P...], e.g. A (--free)',
  starts: 'number of starts 1–1000: the automatic guess plus random perturbations (--starts)',
  seed: 'seed of the multi-start perturbations (--seed)',
  weights: 'auto (default: sigma columns, else the estimated n/k noise ratio) or relative (σ ∝ |value| with a floor) (--weights)',
} as const;

const text = (name: keyof typeof FIT_OPTION_FIELD_DOCS) => z.string().max(2000).optional().describe(FIT_OPTION_FIELD_DOCS[name]);

export const FIT_OPTION_FIELDS = {
  terms: text('terms'),
  urbach: z.enum(['true', 'false']).optional().describe(FIT_OPTION_FIELD_DOCS.urbach),
  target: text('target'),
  range_nm: text('range_nm'),
  fix: text('fix'),
  init: text('init'),
  bounds: text('bounds'),
  free: text('free'),
  starts: text('starts'),
  seed: text('seed'),
  weights: text('weights'),
};

type FitOptionFields = { [K in keyof typeof FIT_OPTION_FIELDS]?: string };

const list = (t: string | undefined) =>
  t
    ?.split(',')
    .map((s) => s.trim())
    .filter(Boolean);
const fieldName = (name: FitOptionName) => (name === 'range' ? 'range_nm' : name);

export function fitOptionsFromFields(f: FitOptionFields): Omit<FitOptions, 'model'> {
  return parseFitOptions(
    {
      terms: f.terms,
      urbach: f.urbach === 'true',
      target: f.target,
      range: f.range_nm,
      fix: list(f.fix),
      init: list(f.init),
      bounds: list(f.bounds),
      free: list(f.free),
      starts: f.starts,
      seed: f.seed,
      weights: f.weights,
    },
    fieldName,
  );
}

/** Names of the fit option fields, for "these need fit=MODEL" refusals. */
export function givenFitFields(f: FitOptionFields): string[] {
  return Object.keys(FIT_OPTION_FIELDS).filter((k) => f[k as keyof FitOptionFields] !== undefined);
}
