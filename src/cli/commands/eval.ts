/** `nkledger eval SOURCE --at ...`: n,k of a measured table (interpolated) or of a registry version at chosen wavelengths. */
import type { Command } from 'commander';
import { Option } from 'commander';
import type { InterpolationMethod } from '../../optics/interpolate.ts';
import { evaluateTable, INTERPOLATION_METHODS } from '../../optics/table-eval.ts';
import { evaluateResolved, type VersionEvaluation } from '../../service/evaluate-version.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines } from '../output.ts';
import { addSourceOptions, loadSource, SOURCE_ARGUMENT_HELP, type SourceFlags } from '../source-options.ts';
import { parseWavelengthList } from '../wavelength-list.ts';

export function register(program: Command): void {
  addSourceOptions(
    program
      .command('eval')
      .description('n and k at given wavelengths, interpolated in a measured table (no extrapolation: outside the range, fit a model)')
      .argument('<source>', SOURCE_ARGUMENT_HELP)
      .requiredOption('--at <nm>', 'wavelengths in nm: a list 400,500,632.8 and/or grids start:stop:step such as 400:800:50')
      .addOption(new Option('--interp <method>', 'interpolation between measured points').choices(INTERPOLATION_METHODS).default('linear'))
      .option('--json', 'print {"wavelength_nm", "n", "k", "interpolation"} as JSON (registry versions add "ref", "sha256", "status", "source", "model", "range_nm")'),
  )
    .addHelpText(
      'after',
      '\nA registry version with a fitted model evaluates anywhere in the model\'s validity range; a table-only version\n' +
        'interpolates inside its measured range.\n\nExamples:\n  nkledger eval data/marrowick/ito-sputtered.tsv --at 400,550,632.8,1550 --interp monotone-cubic\n  nkledger eval sin-pecvd-a@3 --at 400:800:50 --json',
    )
    .action(
      guarded(async (source: string, opts: SourceFlags & { at: string; interp: InterpolationMethod; json?: boolean }) => {
        const wavelengthNm = parseWavelengthList(opts.at);
        const loaded = await loadSource(source, opts);
        if (loaded.detected.source === 'registry') {
          return printVersionEvaluation(evaluateResolved(loaded.detected, loaded.content!, wavelengthNm, { interpolation: opts.interp }), opts.json);
        }
        const { n, k } = evaluateTable(loaded.table!, wavelengthNm, opts.interp);
        if (opts.json) return printJson({ wavelength_nm: wavelengthNm, n, k, interpolation: opts.interp });
        const rows = wavelengthNm.map((w, i) => [String(w), n[i].toFixed(5), k[i].toExponential(3)]);
        printLines(formatTable(['wavelength (nm)', 'n', 'k'], rows));
      }),
    );
}

function printVersionEvaluation(e: VersionEvaluation, json?: boolean): void {
  if (json) {
    const { notices: _n, warnings: _w, ...data } = e;
    return printJson(data);
  }
  const how = e.source === 'model' ? `model ${e.model}` : `table, ${e.interpolation} interpolation`;
  const rows = e.wavelength_nm.map((w, i) => [String(w), e.n[i].toFixed(5), e.k[i].toExponential(3)]);
  printLines([`${e.ref} (${e.status}, ${how}) sha256:${e.sha256.slice(0, 12)}…`, ...formatTable(['wavelength (nm)', 'n', 'k'], rows)]);
}
