/**
 * The values of the import options as a front door received them (text, as typed or sent), turned into
 * ImportOptions. Each front door spells the option names its own way (`--input-unit`, `input_unit`), so
 * messages name the option through `spell`.
 */
import { InputError } from '../errors.ts';
import { parseSpectralUnit, SPECTRAL_UNITS } from '../optics/units.ts';
import { parseOptionNumber } from './numbers.ts';
import type { ImportOptions } from './parse-table.ts';
import { DEFAULT_K_TOLERANCE, DEFAULT_MAX_BYTES, PLAUSIBLE_RANGE_NM } from './import-types.ts';
import type { OptionSpec } from './option-spec.ts';

/**
 * The import options, once: the input flags of every command that reads a table and the fields of every API
 * upload. Names start from what they describe in the INPUT file, so they never clash with output flags such
 * as `convert --x-unit`. Parsed by importOptionsFrom below.
 */
export const IMPORT_OPTIONS: readonly OptionSpec[] = [
  {
    name: 'input_unit',
    argument: '<unit>',
    maxLength: 40,
    description: `unit of the input's x column (${SPECTRAL_UNITS.join(', ')}); overrides the header`,
  },
  {
    name: 'columns',
    argument: '<names>',
    maxLength: 500,
    description:
      'comma-separated names of the input columns in order, overriding the header; needed for headerless files (e.g. wavelength,n,k or energy,eps1,eps2; "-" skips a column)',
  },
  {
    name: 'delimiter',
    argument: '<sep>',
    maxLength: 20,
    description: 'input field separator: comma, semicolon, tab, whitespace or one character (default: detected)',
  },
  {
    name: 'decimal_comma',
    description: 'input numbers use a decimal comma (default: detected; needs a separator other than a comma)',
    negation: 'input numbers use a decimal point, whatever detection says',
  },
  {
    name: 'k_tolerance',
    argument: '<k>',
    maxLength: 40,
    description: `negative k down to -k is noise and set to 0 with a warning; below it the input is refused (default ${DEFAULT_K_TOLERANCE})`,
  },
  {
    name: 'max_size',
    argument: '<MiB>',
    cliOnly: true,
    description: `refuse inputs larger than this many MiB (default ${DEFAULT_MAX_BYTES / 1024 / 1024})`,
  },
  {
    name: 'header_line',
    argument: '<N>',
    maxLength: 20,
    description: 'the header is physical line N (from 1); the lines above it are kept as the preamble (default: detected)',
  },
  {
    name: 'allow_any_range',
    description: `accept x values outside ${PLAUSIBLE_RANGE_NM[0]} nm – ${PLAUSIBLE_RANGE_NM[1] / 1e6} mm (genuine EUV or THz data)`,
  },
];

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
