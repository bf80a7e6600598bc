/** `nkledger eval FILE --at ...`: n,k interpolated at chosen wavelengths inside the measured range. */
import type { Command } from 'commander';
import { Option } from 'commander';
import type { InterpolationMethod } from '../../optics/interpolate.ts';
import { evaluateTable, INTERPOLATION_METHODS } from '../../optics/table-eval.ts';
import { loadTable } from '../../service/source.ts';
import { guarded } from '../failure.ts';
import { addImportOptions, importOptionsFrom, type ImportFlags } from '../import-options.ts';
import { formatTable, printJson, printLines, printWarnings } from '../output.ts';
import { parseWavelengthList } from '../wavelength-list.ts';

export function register(program: Command): void {
  addImportOptions(
    program
      .command('eval')
      .description('n and k at given wavelengths, interpolated in a measured table (no extrapolation: outside the range, fit a model)')
      .argument('<file>', 'table file, or - for standard input')
      .requiredOption('--at <nm>', 'wavelengths in nm: a list 400,500,632.8 and/or grids start:stop:step such as 400:800:50')
      .addOption(new Option('--interp <method>', 'interpolation between measured points').choices(INTERPOLATION_METHODS).default('linear'))
      .option('--json', 'print {"wavelength_nm", "n", "k", "interpolation"} as JSON'),
  )
    .addHelpText('after', '\nExample:\n  nkledger eval data/marrowick/ito-sputtered.tsv --at 400,550,632.8,1550 --interp monotone-cubic')
    .action(
      guarded(async (file: string, opts: ImportFlags & { at: string; interp: InterpolationMethod; json?: boolean }) => {
        const wavelengthNm = parseWavelengthList(opts.at);
        const imported = await loadTable(file, importOptionsFrom(opts));
        const { n, k } = evaluateTable(imported.table, wavelengthNm, opts.interp);
        printWarnings(imported.warnings);
        if (opts.json) return printJson({ wavelength_nm: wavelengthNm, n, k, interpolation: opts.interp });
        const rows = wavelengthNm.map((w, i) => [String(w), n[i].toFixed(5), k[i].toExponential(3)]);
        printLines(formatTable(['wavelength (nm)', 'n', 'k'], rows));
      }),
    );
}
