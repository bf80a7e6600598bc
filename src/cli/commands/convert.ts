/** `nkledger convert FILE --to csv|json`: any accepted dialect to one clean CSV or JSON table. */
import { writeFile } from 'node:fs/promises';
import type { Command } from 'commander';
import { Option } from 'commander';
import { EXPORT_FORMATS, exportTable, type ExportFormat } from '../../io/export.ts';
import { SPECTRAL_UNITS, type SpectralUnit } from '../../optics/units.ts';
import { loadTable } from '../../service/source.ts';
import { guarded } from '../failure.ts';
import { cliIo } from '../io.ts';
import { importOptionsFrom, type ImportFlags } from '../../io/import-options.ts';
import { addImportOptions, cliOptionName } from '../import-options.ts';
import { printWarnings } from '../output.ts';

export function register(program: Command): void {
  addImportOptions(
    program
      .command('convert')
      .description('import a table in any accepted dialect and write it as clean CSV or JSON (x in the chosen unit, n, k, sigmas)')
      .argument('<file>', 'table file, or - for standard input')
      .addOption(new Option('--to <format>', 'output format').choices(EXPORT_FORMATS).makeOptionMandatory())
      .addOption(new Option('--x-unit <unit>', 'unit of the OUTPUT x column').choices(SPECTRAL_UNITS).default('nm'))
      .option('-o, --output <file>', 'write to this file instead of standard output'),
  )
    .addHelpText(
      'after',
      '\nColumns are named with their unit (wavelength_nm, wavelength_um, wavelength_A, energy_eV, wavenumber_cm-1),\n' +
        'so the output imports back unchanged.\n\nExample:\n  nkledger convert data/marrowick/a-si-h.txt --to csv --x-unit nm -o a-si-h.csv',
    )
    .action(
      guarded(async (file: string, opts: ImportFlags & { to: ExportFormat; xUnit: SpectralUnit; output?: string }) => {
        const imported = await loadTable(file, importOptionsFrom(opts, cliOptionName), cliIo().stdin);
        printWarnings(imported.warnings);
        const text = exportTable(imported.table, opts.to, opts.xUnit);
        if (opts.output) await writeFile(opts.output, text);
        else cliIo().stdout.write(text);
      }),
    );
}
