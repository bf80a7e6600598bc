/**
 * The fit options as HTTP fields (upload of a version with `fit=MODEL`, and the stateless POST /fit), from the one
 * table of fit options (FIT_OPTIONS, service/fit-options.ts): spelled as the CLI flags of `nkledger fit`, except
 * `range_nm` for --range; the repeatable ones take comma-separated lists (`fix=A=1,Eb=4`, `bounds=C=0.1:5`,
 * `free=A`). Parsed by the service layer's parseFitOptions, as the CLI's are.
 */
import type { FitOptions } from '../fit/types.ts';
import { fieldSpelling, valuesFromFields } from '../io/option-spec.ts';
import { FIT_OPTIONS, parseFitOptions, type FitOptionName, type FitOptionText } from '../service/fit-options.ts';
import { optionFields } from './option-fields.ts';

export const FIT_OPTION_FIELDS = optionFields(FIT_OPTIONS);

type FitOptionFields = Record<string, string | undefined>;

const fieldName = fieldSpelling(FIT_OPTIONS) as (name: FitOptionName) => string;

export function fitOptionsFromFields(f: FitOptionFields): Omit<FitOptions, 'model'> {
  return parseFitOptions(valuesFromFields(FIT_OPTIONS, f) as FitOptionText, fieldName);
}

/** Names of the fit option fields given, for "these need fit=MODEL" refusals. */
export function givenFitFields(f: FitOptionFields): string[] {
  return Object.keys(FIT_OPTION_FIELDS).filter((field) => f[field] !== undefined);
}
