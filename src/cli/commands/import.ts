/** `nkledger import FILE --material SLUG`: store a measured table (and optionally a fitted model) as a new draft. */
import type { Command } from 'commander';
import { importMeasurement } from '../../service/import-measurement.ts';
import { parseMetaPairs } from '../../service/provenance.ts';
import { readSource } from '../../service/source.ts';
import { actorFrom, addAsOption, addDbOption, withRegistry } from '../admin-options.ts';
import { InputError } from '../../errors.ts';
import { givenFitOptions, parseFitOptions, type FitOptionText } from '../../service/fit-options.ts';
import { guarded } from '../failure.ts';
import { cliIo } from '../io.ts';
import { addFitOptions } from '../fit-options.ts';
import { addImportOptions, importOptionsFrom, type ImportFlags } from '../import-options.ts';
import { printJson, printLines, printWarnings } from '../output.ts';

interface ImportCliOptions extends ImportFlags, FitOptionText {
  db?: string;
  as?: string;
  material: string;
  note?: string;
  meta?: string[];
  kk: boolean;
  fit?: string;
  json?: boolean;
}

export function register(program: Command): void {
  const command = addAsOption(addDbOption(program.command('import')))
    .description('store a measured n,k table as a new draft version of a material, with provenance and a Kramers-Kronig report')
    .argument('<file>', 'table file, or - for standard input')
    .requiredOption('--material <slug>', 'the material (create it first with `nkledger material add`)')
    .option('--note <text>', 'free notes stored with the version')
    .option(
      '--meta <key=value...>',
      'provenance: sample, substrate, process (or recipe), instrument, method (spectroscopic-ellipsometry | spectrophotometry | prism-coupling | other), angles (degrees, e.g. 65,70,75), measured_on (YYYY-MM-DD), operator',
    )
    .option('--fit <model>', 'also fit this dispersion model (e.g. cauchy, sellmeier, tauc-lorentz, tauc-lorentz+drude) and store its report; the fit flags below are those of `nkledger fit`');
  addImportOptions(
    addFitOptions(command)
      .option('--no-kk', 'do not run the Kramers-Kronig check (it runs by default and its report is stored)')
      .option('--json', 'print {"ref", "sha256", "status", "warnings"} as JSON'),
  )
    .addHelpText(
      'after',
      '\nExamples:\n  nkledger import data/marrowick/sinx-pecvd-recipe-a.csv --material sin-pecvd-a --fit tauc-lorentz \\\n' +
        '    --meta instrument="SE-2000" method=spectroscopic-ellipsometry angles=65,70,75 measured_on=2024-04-18 --note "wafer 7, centre"\n' +
        '  nkledger import data/marrowick/sio2-thermal.csv --material sio2-thermal --fit sellmeier --terms 3 --range 250:1700 --fix A=1',
    )
    .action(
      guarded(async (file: string, opts: ImportCliOptions) => {
        const importOptions = importOptionsFrom(opts);
        const provenance = parseMetaPairs(opts.meta ?? []);
        if (opts.note !== undefined) provenance.notes = opts.note;
        const fitFlags = givenFitOptions(opts);
        if (opts.fit === undefined && fitFlags.length) throw new InputError('bad-option', `${fitFlags.map((f) => `--${f}`).join(', ')} configure a fit: add --fit MODEL`);
        const fit = opts.fit === undefined ? undefined : { ...parseFitOptions(opts), model: opts.fit };
        const { bytes, file: name } = await readSource(file, importOptions, cliIo().stdin);
        const stored = await withRegistry(opts, (r) =>
          importMeasurement(r, { slug: opts.material, bytes, file: name, importOptions, fit, kk: opts.kk, provenance }, actorFrom(opts)),
        );
        printWarnings([...stored.import_warnings, ...stored.warnings]);
        if (opts.json) return printJson({ ref: stored.ref, sha256: stored.sha256, status: stored.status, warnings: [...stored.import_warnings, ...stored.warnings] });
        printLines([`stored ${stored.ref} (${stored.status}) sha256:${stored.sha256}`, `someone other than you approves it with: nkledger approve ${stored.ref}`]);
      }),
    );
}
