/**
 * The input flags every command that reads a table shares (inspect, eval, convert, fit, kk, import).
 * They override what the importer detects. Names start from what they describe in the INPUT file, so they
 * never clash with output flags such as `convert --x-unit`.
 */
import { Option, type Command } from 'commander';
import { InputError } from '../errors.ts';
import { parseOptionNumber } from '../io/numbers.ts';
import { DEFAULT_K_TOLERANCE, DEFAULT_MAX_BYTES, type ImportOptions } from '../io/parse-table.ts';
import { PLAUSIBLE_RANGE_NM } from '../io/import-types.ts';
import { parseSpectralUnit, SPECTRAL_UNITS } from '../optics/units.ts';

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

export function addImportOptions(cmd: Command): Command {
  return cmd
    .addOption(new Option('--input-unit <unit>', `unit of the input's x column (${SPECTRAL_UNITS.join(', ')}); overrides the header`))
    .addOption(
      new Option('--columns <names>', 'comma-separated names of the input columns in order, overriding the header; needed for headerless files (e.g. wavelength,n,k or energy,eps1,eps2; "-" skips a column)'),
    )
    .addOption(new Option('--delimiter <sep>', 'input field separator: comma, semicolon, tab, whitespace or one character (default: detected)'))
    .addOption(new Option('--decimal-comma', 'input numbers use a decimal comma (default: detected; needs a separator other than a comma)'))
    .addOption(new Option('--no-decimal-comma', 'input numbers use a decimal point, whatever detection says'))
    .addOption(new Option('--k-tolerance <k>', `negative k down to -k is noise and set to 0 with a warning; below it the input is refused (default ${DEFAULT_K_TOLERANCE})`))
    .addOption(new Option('--max-size <MiB>', `refuse inputs larger than this many MiB (default ${DEFAULT_MAX_BYTES / 1024 / 1024})`))
    .addOption(new Option('--header-line <N>', 'the header is physical line N (from 1); the lines above it are kept as the preamble (default: detected)'))
    .addOption(new Option('--allow-any-range', `accept x values outside ${PLAUSIBLE_RANGE_NM[0]} nm – ${PLAUSIBLE_RANGE_NM[1] / 1e6} mm (genuine EUV or THz data)`));
}

export function importOptionsFrom(opts: ImportFlags): ImportOptions {
  const out: ImportOptions = {};
  if (opts.inputUnit !== undefined) {
    const unit = parseSpectralUnit(opts.inputUnit);
    if (!unit) throw new InputError('bad-option', `--input-unit ${opts.inputUnit}: unknown unit (known: ${SPECTRAL_UNITS.join(', ')})`);
    out.xUnit = unit;
  }
  if (opts.columns !== undefined) out.columns = opts.columns.split(',').map((c) => c.trim());
  if (opts.delimiter !== undefined) out.delimiter = opts.delimiter;
  if (opts.decimalComma !== undefined) out.decimalComma = opts.decimalComma;
  if (opts.kTolerance !== undefined) out.kTolerance = parseOptionNumber(opts.kTolerance, '--k-tolerance', { min: 0 });
  if (opts.headerLine !== undefined) out.headerLine = parseOptionNumber(opts.headerLine, '--header-line', { integer: true, min: 1 });
  if (opts.allowAnyRange) out.allowAnyRange = true;
  if (opts.maxSize !== undefined) out.maxBytes = Math.round(parseOptionNumber(opts.maxSize, '--max-size', { above: 0 }) * 1024 * 1024);
  return out;
}
