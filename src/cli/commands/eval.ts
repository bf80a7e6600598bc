/** `nkledger eval SOURCE --at ...`: n,k of a measured table (interpolated) or of a registry version at chosen wavelengths. */
import type { Command } from 'commander';
import { Option } from 'commander';
import type { InterpolationMethod } from '../../optics/interpolate.ts';
import { INTERPOLATION_METHODS } from '../../optics/table-eval.ts';
import { InputError } from '../../errors.ts';
import { parseSpectralUnit, toWavelengthNm, type SpectralUnit } from '../../optics/units.ts';
import { evaluateContent, evaluateResolved, withUnitColumn, type VersionEvaluation } from '../../service/evaluate-version.ts';
import { guarded } from '../failure.ts';
import { formatTable, printJson, printLines, printWarnings } from '../output.ts';
import { addSourceOptions, loadSource, SOURCE_ARGUMENT_HELP, sourceLabel, type SourceFlags } from '../source-options.ts';
import { parseWavelengthList } from '../../io/wavelength-list.ts';

/** k as printed: exactly 0 as "0" (a transparent table), else 4 significant digits in exponent form. */
const kText = (k: number) => (k === 0 ? '0' : k.toExponential(3));

interface EvalFlags extends SourceFlags {
  at: string;
  atUnit?: string;
  interp: InterpolationMethod;
  extrapolate?: boolean;
  json?: boolean;
}

export function register(program: Command): void {
  addSourceOptions(
    program
      .command('eval')
      .description(
        'n and k at given wavelengths, interpolated in a measured table or from a stored model (--extrapolate: a model also beyond its validity range, marked)',
      )
      .argument('<source>', SOURCE_ARGUMENT_HELP)
      .requiredOption('--at <list>', 'where: a list 400,500,632.8 and/or grids start:stop:step such as 400:800:50 (in nm unless --at-unit)')
      .addOption(new Option('--at-unit <unit>', 'unit of --at and of the printed x column').choices(AT_UNITS).default('nm'))
      .addOption(new Option('--interp <method>', 'interpolation between measured points').choices(INTERPOLATION_METHODS).default('linear'))
      .option('--extrapolate', 'evaluate a fitted model beyond its validity range; every such value is marked (a table never extrapolates)')
      .option(
        '--json',
        'print {"wavelength_nm", "n", "k", "interpolation"} as JSON (registry versions add "ref", "sha256", "status", "source", "model", "range_nm"; --extrapolate adds "extrapolated"; --at-unit adds the x column in that unit, e.g. "energy_eV")',
      ),
  )
    .addHelpText(
      'after',
      "\nA registry version with a fitted model evaluates anywhere in the model's validity range (beyond it with\n" +
        '--extrapolate); a table-only version interpolates inside its measured range and never extrapolates.\n\nExamples:\n' +
        '  nkledger eval data/marrowick/ito-sputtered.tsv --at 400,550,632.8,1550 --interp monotone-cubic\n' +
        '  nkledger eval sin-pecvd-a@3 --at 400:800:50 --json\n' +
        '  nkledger eval sin-pecvd-a@3 --at 1.5:4:0.5 --at-unit eV\n' +
        '  nkledger eval sin-pecvd-a@3 --at 200,1900 --extrapolate',
    )
    .action(
      guarded(async (source: string, opts: EvalFlags) => {
        const unit = parseSpectralUnit(opts.atUnit ?? 'nm') ?? 'nm';
        const at = parseWavelengthList(opts.at);
        if (at.some((v) => !(v > 0))) throw new InputError('bad-option', `--at: every value must be positive (in ${opts.atUnit})`);
        const wavelengthNm = at.map((v) => (unit === 'nm' ? v : toWavelengthNm(v, unit)));
        const loaded = await loadSource(source, opts);
        const options = { interpolation: opts.interp, extrapolate: opts.extrapolate };
        if (loaded.detected.source === 'registry') {
          return printVersionEvaluation(evaluateResolved(loaded.detected, loaded.content!, wavelengthNm, options), unit, at, opts.json);
        }
        const { n, k, extrapolated } = evaluateContent(
          { table: loaded.table, fit: null, kk: null },
          wavelengthNm,
          opts.interp,
          sourceLabel(source, loaded),
          opts.extrapolate,
        );
        if (opts.json)
          return printJson(
            withUnitColumn({ wavelength_nm: wavelengthNm, n, k, ...(opts.extrapolate && { extrapolated }), interpolation: opts.interp }, unit),
          );
        printLines(
          formatTable(
            [`${xHeading(unit)}`, 'n', 'k'],
            at.map((x, i) => [String(x), n[i].toFixed(5), kText(k[i])]),
          ),
        );
      }),
    );
}

const AT_UNITS = ['nm', 'um', 'eV', 'cm-1'];

function xHeading(unit: SpectralUnit): string {
  if (unit === 'eV') return 'energy (eV)';
  if (unit === 'cm-1') return 'wavenumber (cm-1)';
  return `wavelength (${unit === 'um' ? 'µm' : unit})`;
}

function printVersionEvaluation(e: VersionEvaluation, unit: SpectralUnit, at: number[], json?: boolean): void {
  printWarnings(e.warnings.filter((w) => w.includes('extrapolated')));
  if (json) {
    const { notices: _n, warnings, ...data } = e;
    const extrapolation = warnings.filter((w) => w.includes('extrapolated'));
    return printJson(withUnitColumn({ ...data, ...(extrapolation.length && { warnings: extrapolation }) }, unit));
  }
  const how = e.source === 'model' ? `model ${e.model}` : `table, ${e.interpolation} interpolation`;
  const rows = at.map((x, i) => [String(x), e.n[i].toFixed(5), kText(e.k[i]), ...(e.extrapolated ? [e.extrapolated[i] ? 'EXTRAPOLATED' : ''] : [])]);
  const heading = [xHeading(unit), 'n', 'k', ...(e.extrapolated ? [''] : [])];
  printLines([`${e.ref} (${e.status}, ${how}) sha256:${e.sha256.slice(0, 12)}…`, ...formatTable(heading, rows)]);
}
