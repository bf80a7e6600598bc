/** `nkledger eval FILE --at ...`: n,k interpolated at chosen wavelengths inside the measured range. */
import type { Command } from 'commander';
import { Option } from 'commander';
import type { InterpolationMethod } from '../../optics/interpolate.ts';
import { evaluateTable, INTERPOLATION_METHODS } from '../../optics/table-eval.ts';
import { loadTable, isRegistrySource } from '../../service/source.ts';
import { evaluateVersion } from '../../service/evaluate-version.ts';
import { withRegistry } from '../admin-options.ts';
import { printResolution } from '../registry-output.ts';
import { guarded } from '../failure.ts';
import { addImportOptions, importOptionsFrom, type ImportFlags } from '../import-options.ts';
import { formatTable, printJson, printLines, printWarnings } from '../output.ts';
import { parseWavelengthList } from '../wavelength-list.ts';

export function register(program: Command): void {
  addImportOptions(
    program
      .command('eval')
      .description('n and k at given wavelengths, interpolated in a measured table (no extrapolation: outside the range, fit a model)')
      .argument('<file>', 'table file, - for standard input, or a registry version (slug@N, slug@sha256:PREFIX, bare slug = latest approved)')
      .requiredOption('--at <nm>', 'wavelengths in nm: a list 400,500,632.8 and/or grids start:stop:step such as 400:800:50')
      .addOption(new Option('--interp <method>', 'interpolation between measured points').choices(INTERPOLATION_METHODS).default('linear'))
      .option('--json', 'print {"wavelength_nm", "n", "k", "interpolation"} as JSON (registry versions add "ref", "sha256", "source")'),
  )
    .option('--db <path>', 'registry database for a version reference (default: $NKLEDGER_DB, else ./nkledger.db)')
    .addHelpText(
      'after',
      '\nA registry version with a fitted model evaluates anywhere in the model\'s validity range; a table-only version\n' +
        'interpolates inside its measured range.\n\nExamples:\n  nkledger eval data/marrowick/ito-sputtered.tsv --at 400,550,632.8,1550 --interp monotone-cubic\n  nkledger eval sin-pecvd-a@3 --at 400:800:50 --json',
    )
    .action(
      guarded(async (file: string, opts: ImportFlags & { at: string; interp: InterpolationMethod; json?: boolean; db?: string }) => {
        const wavelengthNm = parseWavelengthList(opts.at);
        if (isRegistrySource(file)) return printVersionEvaluation(await withRegistry(opts, (r) => evaluateVersion(r, file, wavelengthNm, { interpolation: opts.interp })), opts.json);
        const imported = await loadTable(file, importOptionsFrom(opts));
        const { n, k } = evaluateTable(imported.table, wavelengthNm, opts.interp);
        printWarnings(imported.warnings);
        if (opts.json) return printJson({ wavelength_nm: wavelengthNm, n, k, interpolation: opts.interp });
        const rows = wavelengthNm.map((w, i) => [String(w), n[i].toFixed(5), k[i].toExponential(3)]);
        printLines(formatTable(['wavelength (nm)', 'n', 'k'], rows));
      }),
    );
}

function printVersionEvaluation(e: ReturnType<typeof evaluateVersion>, json?: boolean): void {
  printResolution(e);
  if (json) {
    const { notices: _n, warnings: _w, ...data } = e;
    return printJson(data);
  }
  const how = e.source === 'model' ? `model ${e.model}` : `table, ${e.interpolation} interpolation`;
  const rows = e.wavelength_nm.map((w, i) => [String(w), e.n[i].toFixed(5), e.k[i].toExponential(3)]);
  printLines([`${e.ref} (${e.status}, ${how}) sha256:${e.sha256.slice(0, 12)}…`, ...formatTable(['wavelength (nm)', 'n', 'k'], rows)]);
}
