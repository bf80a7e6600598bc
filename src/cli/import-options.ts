/**
 * The input flags every command that reads a table shares (inspect, eval, convert, fit, kk, import).
 * They override what the importer detects. Names start from what they describe in the INPUT file, so they
 * never clash with output flags such as `convert --x-unit`.
 */
import { Option, type Command } from 'commander';
import type { SpellOption } from '../io/import-options.ts';
import { DEFAULT_K_TOLERANCE, DEFAULT_MAX_BYTES } from '../io/parse-table.ts';
import { PLAUSIBLE_RANGE_NM } from '../io/import-types.ts';
import { SPECTRAL_UNITS } from '../optics/units.ts';

/** CLI spelling of an import option: `--input-unit`. */
export const cliOptionName: SpellOption = (key) => `--${key.replace(/[A-Z]/g, (c) => `-${c.toLowerCase()}`)}`;

export function addImportOptions(cmd: Command): Command {
  return cmd
    .addOption(new Option('--input-unit <unit>', `unit of the input's x column (${SPECTRAL_UNITS.join(', ')}); overrides the header`))
    .addOption(
      new Option(
        '--columns <names>',
        'comma-separated names of the input columns in order, overriding the header; needed for headerless files (e.g. wavelength,n,k or energy,eps1,eps2; "-" skips a column)',
      ),
    )
    .addOption(new Option('--delimiter <sep>', 'input field separator: comma, semicolon, tab, whitespace or one character (default: detected)'))
    .addOption(new Option('--decimal-comma', 'input numbers use a decimal comma (default: detected; needs a separator other than a comma)'))
    .addOption(new Option('--no-decimal-comma', 'input numbers use a decimal point, whatever detection says'))
    .addOption(
      new Option(
        '--k-tolerance <k>',
        `negative k down to -k is noise and set to 0 with a warning; below it the input is refused (default ${DEFAULT_K_TOLERANCE})`,
      ),
    )
    .addOption(new Option('--max-size <MiB>', `refuse inputs larger than this many MiB (default ${DEFAULT_MAX_BYTES / 1024 / 1024})`))
    .addOption(
      new Option('--header-line <N>', 'the header is physical line N (from 1); the lines above it are kept as the preamble (default: detected)'),
    )
    .addOption(
      new Option(
        '--allow-any-range',
        `accept x values outside ${PLAUSIBLE_RANGE_NM[0]} nm – ${PLAUSIBLE_RANGE_NM[1] / 1e6} mm (genuine EUV or THz data)`,
      ),
    );
}
