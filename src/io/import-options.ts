/**
 * The values of the import options as a front door received them (text, as typed or sent), turned into
 * ImportOptions. Each front door spells the option names its own way (`--input-unit`, `input_unit`), so
 * messages name the option through `spell`.
 */
import { InputError } from '../errors.ts';
import { parseSpectralUnit, SPECTRAL_UNITS } from '../optics/units.ts';
import { parseOptionNumber } from './numbers.ts';
import type { ImportOptions } from './parse-table.ts';

export interface ImportFlags {
  inputUnit?: string;
  columns?: string;
  delimiter?: string;
  decimalComma?: boolean;
  kTolerance?: string;
  maxSize?: string;
  headerLine?: string;
  allowAnyRange?: boolean;
}

/** How a front door names an import option in its messages. */
export type SpellOption = (key: keyof ImportFlags) => string;

export function importOptionsFrom(opts: ImportFlags, spell: SpellOption): ImportOptions {
  const out: ImportOptions = {};
  if (opts.inputUnit !== undefined) {
    const unit = parseSpectralUnit(opts.inputUnit);
    if (!unit) throw new InputError('bad-option', `${spell('inputUnit')} ${opts.inputUnit}: unknown unit (known: ${SPECTRAL_UNITS.join(', ')})`);
    out.xUnit = unit;
  }
  if (opts.columns !== undefined) out.columns = opts.columns.split(',').map((c) => c.trim());
  if (opts.delimiter !== undefined) out.delimiter = opts.delimiter;
  if (opts.decimalComma !== undefined) out.decimalComma = opts.decimalComma;
  if (opts.kTolerance !== undefined) out.kTolerance = parseOptionNumber(opts.kTolerance, spell('kTolerance'), { min: 0 });
  if (opts.headerLine !== undefined) out.headerLine = parseOptionNumber(opts.headerLine, spell('headerLine'), { integer: true, min: 1 });
  if (opts.allowAnyRange) out.allowAnyRange = true;
  if (opts.maxSize !== undefined) out.maxBytes = Math.round(parseOptionNumber(opts.maxSize, spell('maxSize'), { above: 0 }) * 1024 * 1024);
  return out;
}
